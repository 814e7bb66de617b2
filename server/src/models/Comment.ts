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
import type { FileResult } from "./FileResult.ts";
import type { User } from "./User.ts";

export class Comment extends Model<InferAttributes<Comment>, InferCreationAttributes<Comment>> {
  declare id: CreationOptional<number>;
  declare fileResultId: ForeignKey<FileResult["id"]>;
  declare authorId: ForeignKey<User["id"]>;
  declare body: string;
  declare atSeconds: CreationOptional<number | null>;
  declare channel: CreationOptional<number | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare author?: NonAttribute<User>;

  static initModel(sequelize: Sequelize): void {
    Comment.init(
      {
        id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
        body: { type: DataTypes.TEXT, allowNull: false },
        atSeconds: { type: DataTypes.DOUBLE, allowNull: true },
        channel: { type: DataTypes.INTEGER, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "comments", modelName: "Comment" },
    );
  }
}
