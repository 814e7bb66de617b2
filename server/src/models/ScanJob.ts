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
import type { ScanJobState } from "@tidemark/shared/types/api";
import type { ScanRun } from "./ScanRun.ts";

export class ScanJob extends Model<InferAttributes<ScanJob>, InferCreationAttributes<ScanJob>> {
  declare id: CreationOptional<number>;
  declare runId: ForeignKey<ScanRun["id"]>;
  /** Relative to the run's root, forward slashes: the report path. */
  declare path: string;
  /** Exact bytes of a relative path that is not UTF-8, base64 (the report's `pathBytes`); null otherwise. */
  declare pathBytes: CreationOptional<string | null>;
  /** BIGINT: pg returns it as a string. */
  declare sizeBytes: string | number;
  declare mtimeMs: number;
  /** The pg-boss job that currently carries this file (a retry after dead-lettering makes a new one). */
  declare queueJobId: string;
  declare state: CreationOptional<ScanJobState>;
  declare attempts: CreationOptional<number>;
  declare worker: string | null;
  declare lastError: string | null;
  declare claimedAt: Date | null;
  declare expiresAt: Date | null;
  /** Last sign of life of the worker holding the job (active jobs only). */
  declare heartbeatAt: CreationOptional<Date | null>;
  /** Workers that could not reach the file since the job was last queued afresh. */
  declare unreachableBy: CreationOptional<string[]>;
  /** Failed or silent attempts since the job was last queued afresh; N of them dead-letter it. */
  declare failures: CreationOptional<number>;
  declare doneAt: Date | null;
  declare fileResultId: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare run?: NonAttribute<ScanRun>;

  static initModel(sequelize: Sequelize): void {
    ScanJob.init(
      {
        id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
        path: { type: DataTypes.TEXT, allowNull: false },
        pathBytes: { type: DataTypes.TEXT, allowNull: true },
        sizeBytes: { type: DataTypes.BIGINT, allowNull: false },
        mtimeMs: { type: DataTypes.DOUBLE, allowNull: false },
        queueJobId: { type: DataTypes.UUID, allowNull: false, unique: true },
        // A PostgreSQL enum (see the migration); a plain string on this side.
        state: { type: DataTypes.TEXT, allowNull: false, defaultValue: "queued" },
        attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        worker: { type: DataTypes.TEXT, allowNull: true },
        lastError: { type: DataTypes.TEXT, allowNull: true },
        claimedAt: { type: DataTypes.DATE, allowNull: true },
        expiresAt: { type: DataTypes.DATE, allowNull: true },
        heartbeatAt: { type: DataTypes.DATE, allowNull: true },
        unreachableBy: { type: DataTypes.ARRAY(DataTypes.TEXT), allowNull: false, defaultValue: [] },
        failures: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        doneAt: { type: DataTypes.DATE, allowNull: true },
        fileResultId: { type: DataTypes.INTEGER, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "scan_jobs", modelName: "ScanJob" },
    );
  }
}
