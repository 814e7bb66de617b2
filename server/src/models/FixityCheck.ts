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
import type { FixityOutcome } from "@tidemark/shared/types/api";
import type { ApiToken } from "./ApiToken.ts";
import type { Collection } from "./Collection.ts";
import type { FileResult } from "./FileResult.ts";
import type { User } from "./User.ts";

/** One file checked by `tidemark verify --upload`. */
export class FixityCheck extends Model<InferAttributes<FixityCheck>, InferCreationAttributes<FixityCheck>> {
  declare id: CreationOptional<number>;
  declare collectionId: ForeignKey<Collection["id"]>;
  declare path: string;
  declare fileResultId: ForeignKey<FileResult["id"]> | null;
  declare outcome: FixityOutcome;
  declare expectedSha256: string | null;
  declare actualSha256: string | null;
  declare movedTo: string | null;
  declare detail: string;
  declare checkedAt: Date;
  declare userId: ForeignKey<User["id"]>;
  declare tokenId: ForeignKey<ApiToken["id"]> | null;
  declare createdAt: CreationOptional<Date>;
  declare user?: NonAttribute<User>;
  declare token?: NonAttribute<ApiToken>;

  static initModel(sequelize: Sequelize): void {
    FixityCheck.init(
      {
        id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
        path: { type: DataTypes.TEXT, allowNull: false },
        outcome: { type: DataTypes.TEXT, allowNull: false },
        expectedSha256: { type: DataTypes.TEXT, allowNull: true },
        actualSha256: { type: DataTypes.TEXT, allowNull: true },
        movedTo: { type: DataTypes.TEXT, allowNull: true },
        detail: { type: DataTypes.TEXT, allowNull: false, defaultValue: "" },
        checkedAt: { type: DataTypes.DATE, allowNull: false },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "fixity_checks", modelName: "FixityCheck", updatedAt: false },
    );
  }
}
