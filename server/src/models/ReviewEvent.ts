import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type NonAttribute,
  type Sequelize,
} from "sequelize";
import type { ReviewState } from "@tidemark/shared/types/api";
import type { FileResult } from "./FileResult.ts";
import type { User } from "./User.ts";

export class ReviewEvent extends Model<InferAttributes<ReviewEvent>, InferCreationAttributes<ReviewEvent>> {
  declare id: CreationOptional<number>;
  declare fileResultId: ForeignKey<FileResult["id"]>;
  declare actorId: ForeignKey<User["id"]>;
  declare fromState: ReviewState;
  declare toState: ReviewState;
  declare reason: string;
  declare createdAt: CreationOptional<Date>;
  declare actor?: NonAttribute<User>;

  static initModel(sequelize: Sequelize): void {
    ReviewEvent.init(
      {
        id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
        fromState: { type: DataTypes.TEXT, allowNull: false },
        toState: { type: DataTypes.TEXT, allowNull: false },
        reason: { type: DataTypes.TEXT, allowNull: false, defaultValue: "" },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "review_events", modelName: "ReviewEvent", updatedAt: false },
    );
  }
}
