/**
 * The run models, initialised beside the core ones (models/index.ts) on the same Sequelize instance.
 * Kept here with the queue they describe; associations to core models are declared from this side only.
 */
import type { Sequelize } from "sequelize";
import { Batch, Collection, initModels, User } from "../../models/index.ts";
import { ScanJob } from "./ScanJob.ts";
import { ScanJobAttempt } from "./ScanJobAttempt.ts";
import { ScanRun } from "./ScanRun.ts";

export { ScanJob, ScanJobAttempt, ScanRun };
export type { AttemptOutcome } from "./ScanJobAttempt.ts";

let initialisedOn: Sequelize | null = null;

export function initRunModels(sequelize: Sequelize): void {
  initModels(sequelize);
  if (initialisedOn === sequelize) return;
  initialisedOn = sequelize;
  for (const model of [ScanRun, ScanJob, ScanJobAttempt]) model.initModel(sequelize);
  ScanRun.belongsTo(Collection, { foreignKey: "collectionId", as: "collection" });
  ScanRun.belongsTo(Batch, { foreignKey: "batchId", as: "batch" });
  ScanRun.belongsTo(User, { foreignKey: "createdBy", as: "creator" });
  ScanRun.hasMany(ScanJob, { foreignKey: "runId", as: "jobs" });
  ScanJob.belongsTo(ScanRun, { foreignKey: "runId", as: "run" });
  ScanJob.hasMany(ScanJobAttempt, { foreignKey: "jobId", as: "attemptLog" });
}
