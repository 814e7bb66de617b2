import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from "sequelize";
import type { ScanJob } from "./ScanJob.ts";

/**
 * `superseded`: another attempt delivered the result while this one was still open; `unreachable`: the
 * worker could not reach the file (no retry spent); `requeued`: a supervisor sent it back by hand.
 */
export const ATTEMPT_OUTCOMES = ["done", "failed", "released", "expired", "superseded", "unreachable", "requeued"] as const;
export type AttemptOutcome = (typeof ATTEMPT_OUTCOMES)[number];

/** One claim of a job by a worker, and how it ended (null while it is still open). */
export class ScanJobAttempt extends Model<InferAttributes<ScanJobAttempt>, InferCreationAttributes<ScanJobAttempt>> {
  declare id: CreationOptional<number>;
  declare jobId: ForeignKey<ScanJob["id"]>;
  declare attempt: number;
  declare worker: string;
  /** The API token that claimed this attempt (null once the token is deleted). */
  declare tokenId: string | null;
  declare claimedAt: CreationOptional<Date>;
  declare endedAt: Date | null;
  declare outcome: AttemptOutcome | null;
  declare message: string | null;

  static initModel(sequelize: Sequelize): void {
    ScanJobAttempt.init(
      {
        id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
        attempt: { type: DataTypes.INTEGER, allowNull: false },
        worker: { type: DataTypes.TEXT, allowNull: false },
        tokenId: { type: DataTypes.TEXT, allowNull: true },
        claimedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
        endedAt: { type: DataTypes.DATE, allowNull: true },
        outcome: { type: DataTypes.TEXT, allowNull: true },
        message: { type: DataTypes.TEXT, allowNull: true },
      },
      { sequelize, tableName: "scan_job_attempts", modelName: "ScanJobAttempt", timestamps: false },
    );
  }
}
