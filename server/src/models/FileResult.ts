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
import type { CloseupOmittedReason, ExcerptMediaType, FindingSummaryDto, ReviewState } from "@tidemark/shared/types/api";
import type { AudioFormat, FileMetadata, FileMetrics, ReportError, Verdict } from "@tidemark/shared/types/report";
import type { Batch } from "./Batch.ts";
import type { Collection } from "./Collection.ts";
import type { Finding } from "./Finding.ts";

/** One close-up as stored: the report's window and finding indexes, and the object keys of what arrived. */
export interface StoredCloseup {
  /** Index in the report's `closeups` of the file (the `k` of its URLs). */
  index: number;
  /** Indexes into the report's findings of the file, which are the file's first findings rows by id. */
  findings: number[];
  startSeconds: number;
  endSeconds: number;
  secondsPerColumn: number;
  spectrogramKey: string;
  waveformKey: string;
  excerptKey: string | null;
  excerptMediaType: ExcerptMediaType | null;
  excerptSampleRateHz: number | null;
}

export interface StoredCloseupOmitted {
  finding: number;
  reason: CloseupOmittedReason;
}

export class FileResult extends Model<InferAttributes<FileResult>, InferCreationAttributes<FileResult>> {
  declare id: CreationOptional<number>;
  declare batchId: ForeignKey<Batch["id"]>;
  declare collectionId: ForeignKey<Collection["id"]>;
  /** The same path's scan before this one in the same collection. */
  declare previousId: number | null;
  declare path: string;
  /** Exact bytes of a path that is not UTF-8, base64 (the report's `pathBytes`); null otherwise. */
  declare pathBytes: CreationOptional<string | null>;
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
  declare levelGridKey: CreationOptional<string | null>;
  declare loudnessCurveKey: CreationOptional<string | null>;
  declare closeups: CreationOptional<StoredCloseup[]>;
  declare closeupsOmitted: CreationOptional<StoredCloseupOmitted[]>;
  /** Every object key of the review artefacts above (not the overview PNGs): the sweep's and delete's list. */
  declare artefactKeys: CreationOptional<string[]>;
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
        pathBytes: { type: DataTypes.TEXT, allowNull: true },
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
        levelGridKey: { type: DataTypes.TEXT, allowNull: true },
        loudnessCurveKey: { type: DataTypes.TEXT, allowNull: true },
        closeups: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
        closeupsOmitted: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
        artefactKeys: { type: DataTypes.ARRAY(DataTypes.TEXT), allowNull: false, defaultValue: [] },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: "file_results", modelName: "FileResult" },
    );
  }
}
