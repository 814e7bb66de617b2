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
import type { ProfileLimitsDto } from "@tidemark/shared/types/api";
import type { Collection } from "./Collection.ts";
import type { User } from "./User.ts";

export class Batch extends Model<InferAttributes<Batch>, InferCreationAttributes<Batch>> {
  declare id: CreationOptional<number>;
  declare collectionId: ForeignKey<Collection["id"]>;
  declare uploaderId: ForeignKey<User["id"]>;
  declare batchKey: string;
  declare profileName: string;
  declare profileHash: string | null;
  declare toolName: string;
  declare toolVersion: string;
  declare startedAt: Date;
  declare finishedAt: Date;
  declare fileCount: number;
  declare passCount: number;
  declare warnCount: number;
  declare failCount: number;
  declare errorCount: number;
  /** The scan profile's limits from the report (`profile.limits`), or null when it carried none. */
  declare profileLimits: CreationOptional<ProfileLimitsDto | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare collection?: NonAttribute<Collection>;
  declare uploader?: NonAttribute<User>;

  static initModel(sequelize: Sequelize): void {
    // A fresh object each: Sequelize writes into attribute definitions, so they must not be shared.
    const count = () => ({ type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 });
    Batch.init(
      {
        id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
        batchKey: { type: DataTypes.TEXT, allowNull: false },
        profileName: { type: DataTypes.TEXT, allowNull: false },
        profileHash: { type: DataTypes.TEXT, allowNull: true },
        toolName: { type: DataTypes.TEXT, allowNull: false },
        toolVersion: { type: DataTypes.TEXT, allowNull: false },
        startedAt: { type: DataTypes.DATE, allowNull: false },
        finishedAt: { type: DataTypes.DATE, allowNull: false },
        fileCount: count(),
        passCount: count(),
        warnCount: count(),
        failCount: count(),
        errorCount: count(),
        profileLimits: { type: DataTypes.JSONB, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "batches", modelName: "Batch" },
    );
  }
}
