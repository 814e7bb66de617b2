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
import type { RunProfileDto } from "@tidemark/shared/types/api";
import type { Batch, Collection, User } from "./index.ts";

export class ScanRun extends Model<InferAttributes<ScanRun>, InferCreationAttributes<ScanRun>> {
  declare id: CreationOptional<number>;
  declare collectionId: ForeignKey<Collection["id"]>;
  declare batchId: ForeignKey<Batch["id"]>;
  declare createdBy: ForeignKey<User["id"]>;
  declare name: string;
  /** Folder on the shared storage that job paths are relative to. */
  declare root: string;
  declare profileName: string;
  declare profileHash: string;
  declare profile: RunProfileDto["definition"];
  /** First claim of any of its jobs. */
  declare startedAt: Date | null;
  /** Set when the last job reached done or failed; cleared when jobs are added or retried. */
  declare finishedAt: Date | null;
  /** The failing-run e-mail went out (once per finish). */
  declare notifiedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare collection?: NonAttribute<Collection>;
  declare creator?: NonAttribute<User>;

  static initModel(sequelize: Sequelize): void {
    ScanRun.init(
      {
        id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
        name: { type: DataTypes.TEXT, allowNull: false },
        root: { type: DataTypes.TEXT, allowNull: false },
        profileName: { type: DataTypes.TEXT, allowNull: false },
        profileHash: { type: DataTypes.TEXT, allowNull: false },
        profile: { type: DataTypes.JSONB, allowNull: false },
        startedAt: { type: DataTypes.DATE, allowNull: true },
        finishedAt: { type: DataTypes.DATE, allowNull: true },
        notifiedAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "scan_runs", modelName: "ScanRun" },
    );
  }
}
