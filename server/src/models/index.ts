/**
 * The one model registry: every model (the core ones and the distributed-scanning runs, jobs and
 * attempts), initialised on one Sequelize instance with every association declared here. Called
 * explicitly once by whoever owns the connection (createApp, main, the queue supervisor, tests); mounting
 * a router never initialises anything.
 */
import type { Sequelize } from "sequelize";
import { ApiToken } from "./ApiToken.ts";
import { AuditEntry } from "./AuditEntry.ts";
import { Batch } from "./Batch.ts";
import { Collection } from "./Collection.ts";
import { Comment } from "./Comment.ts";
import { FileResult } from "./FileResult.ts";
import { Finding } from "./Finding.ts";
import { FixityCheck } from "./FixityCheck.ts";
import { PasswordReset } from "./PasswordReset.ts";
import { ReviewEvent } from "./ReviewEvent.ts";
import { ScanJob } from "./ScanJob.ts";
import { ScanJobAttempt } from "./ScanJobAttempt.ts";
import { ScanRun } from "./ScanRun.ts";
import { User } from "./User.ts";

export { ApiToken, AuditEntry, Batch, Collection, Comment, FileResult, Finding, FixityCheck, PasswordReset, ReviewEvent, ScanJob, ScanJobAttempt, ScanRun, User };
export type { AttemptOutcome } from "./ScanJobAttempt.ts";

let initialisedOn: Sequelize | null = null;

/**
 * Sequelize models are module-level classes, so one process serves one database; re-initialising on a
 * second instance (tests) rebinds them.
 */
export function initModels(sequelize: Sequelize): void {
  if (initialisedOn === sequelize) return;
  initialisedOn = sequelize;
  for (const model of [User, ApiToken, PasswordReset, Collection, Batch, FileResult, Finding, Comment, ReviewEvent, AuditEntry, FixityCheck, ScanRun, ScanJob, ScanJobAttempt]) {
    model.initModel(sequelize);
  }
  User.hasMany(ApiToken, { foreignKey: "userId", as: "tokens" });
  ApiToken.belongsTo(User, { foreignKey: "userId", as: "owner" });
  PasswordReset.belongsTo(User, { foreignKey: "userId", as: "user" });
  Batch.belongsTo(Collection, { foreignKey: "collectionId", as: "collection" });
  Batch.belongsTo(User, { foreignKey: "uploaderId", as: "uploader" });
  Batch.hasMany(FileResult, { foreignKey: "batchId", as: "files" });
  FileResult.belongsTo(Batch, { foreignKey: "batchId", as: "batch" });
  FileResult.belongsTo(Collection, { foreignKey: "collectionId", as: "collection" });
  FileResult.hasMany(Finding, { foreignKey: "fileResultId", as: "findings" });
  FileResult.hasMany(Comment, { foreignKey: "fileResultId", as: "comments" });
  FileResult.hasMany(ReviewEvent, { foreignKey: "fileResultId", as: "reviewEvents" });
  Finding.belongsTo(FileResult, { foreignKey: "fileResultId" });
  Comment.belongsTo(User, { foreignKey: "authorId", as: "author" });
  ReviewEvent.belongsTo(User, { foreignKey: "actorId", as: "actor" });
  AuditEntry.belongsTo(User, { foreignKey: "actorId", as: "actor", constraints: false });
  FixityCheck.belongsTo(Collection, { foreignKey: "collectionId", as: "collection" });
  FixityCheck.belongsTo(FileResult, { foreignKey: "fileResultId", as: "fileResult", constraints: false });
  FixityCheck.belongsTo(User, { foreignKey: "userId", as: "user" });
  FixityCheck.belongsTo(ApiToken, { foreignKey: "tokenId", as: "token" });
  ScanRun.belongsTo(Collection, { foreignKey: "collectionId", as: "collection" });
  ScanRun.belongsTo(Batch, { foreignKey: "batchId", as: "batch" });
  ScanRun.belongsTo(User, { foreignKey: "createdBy", as: "creator" });
  ScanRun.hasMany(ScanJob, { foreignKey: "runId", as: "jobs" });
  ScanJob.belongsTo(ScanRun, { foreignKey: "runId", as: "run" });
  ScanJob.hasMany(ScanJobAttempt, { foreignKey: "jobId", as: "attemptLog" });
}
