/** All models, initialised on one Sequelize instance, with every association declared here. */
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
import { User } from "./User.ts";

export { ApiToken, AuditEntry, Batch, Collection, Comment, FileResult, Finding, FixityCheck, PasswordReset, ReviewEvent, User };

let initialisedOn: Sequelize | null = null;

/**
 * Sequelize models are module-level classes, so one process serves one database; re-initialising on a
 * second instance (tests) rebinds them.
 */
export function initModels(sequelize: Sequelize): void {
  if (initialisedOn === sequelize) return;
  initialisedOn = sequelize;
  for (const model of [User, ApiToken, PasswordReset, Collection, Batch, FileResult, Finding, Comment, ReviewEvent, AuditEntry, FixityCheck]) {
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
}
