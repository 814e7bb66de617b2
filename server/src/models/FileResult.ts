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
import type { FindingSummaryDto, ReviewState } from "@tidemark/shared/types/api";
import type { AudioFormat, FileMetadata, FileMetrics, ReportError, Verdict } from "@tidemark/shared/types/report";
import type { Batch } from "./Batch.ts";
import type { Collection } from "./Collection.ts";
import type { Finding } from "./Finding.ts";

export class FileResult extends Model<InferAttributes<FileResult>, InferCreationAttributes<FileResult>> {
  declare id: CreationOptional<number>;
  declare batchId: ForeignKey<Batch["id"]>;
  declare collectionId: ForeignKey<Collection["id"]>;
  /** The same path's scan before this one in the same collection. */
  declare previousId: number | null;
  declare path: string;
  /** BIGINT: pg returns it as a string. */
  declare sizeBytes: string | number;
  declare sha256: string | null;
  declare format: AudioFormat | null;
  declare metadata: FileMetadata;
  declare metrics: FileMetrics | null;
  declare error: ReportError | null;
  declare verdict: Verdict;
  declare reviewState: CreationOptional<ReviewState>;
  declare durationSeconds: number | null;
  declare integratedLufs: number | null;
  declare truePeakDbtp: number | null;
  declare worstFindings: FindingSummaryDto[];
  declare findingCodes: string[];
  declare spectrogramKey: string | null;
  declare waveformKey: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare collection?: NonAttribute<Collection>;
  declare batch?: NonAttribute<Batch>;
  declare findings?: NonAttribute<Finding[]>;

  static initModel(sequelize: Sequelize): void {
    FileResult.init(
      {
        id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
        previousId: { type: DataTypes.INTEGER, allowNull: true },
        path: { type: DataTypes.TEXT, allowNull: false },
        sizeBytes: { type: DataTypes.BIGINT, allowNull: false },
        sha256: { type: DataTypes.TEXT, allowNull: true },
        format: { type: DataTypes.JSONB, allowNull: true },
        metadata: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
        metrics: { type: DataTypes.JSONB, allowNull: true },
        error: { type: DataTypes.JSONB, allowNull: true },
        // PostgreSQL enum types (see the migration); plain strings on this side.
        verdict: { type: DataTypes.TEXT, allowNull: false },
        reviewState: { type: DataTypes.TEXT, allowNull: false, defaultValue: "pending" },
        durationSeconds: { type: DataTypes.DOUBLE, allowNull: true },
        integratedLufs: { type: DataTypes.DOUBLE, allowNull: true },
        truePeakDbtp: { type: DataTypes.DOUBLE, allowNull: true },
        worstFindings: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
        findingCodes: { type: DataTypes.ARRAY(DataTypes.TEXT), allowNull: false, defaultValue: [] },
        spectrogramKey: { type: DataTypes.TEXT, allowNull: true },
        waveformKey: { type: DataTypes.TEXT, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "file_results", modelName: "FileResult" },
    );
  }
}
