/**
 * A batch key names one upload. Sending it again with the same report (a retry, a spooled copy) is a
 * harmless repeat; sending it with another report or into another collection would silently drop the new
 * files, so it is a 409 that says what differs. "Same" means: same collection, same profile, same scan
 * times, the same file paths with the same SHA-256. (Stored verdicts are not compared: ingest may raise
 * them itself, e.g. for a fixity change.)
 */
import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import type { ScanReport } from "@tidemark/shared/types/report";
import { HttpError } from "../errors.ts";
import { Batch, Collection } from "../models/index.ts";

const LISTED = 3;

const list = (items: string[]): string =>
  items.slice(0, LISTED).map((p) => JSON.stringify(p)).join(", ") + (items.length > LISTED ? ` and ${items.length - LISTED} more` : "");

/** What differs between the stored batch and this upload, in words; empty when it is the same upload. */
export async function batchDifferences(sequelize: Sequelize, batch: Batch, collectionName: string, report: ScanReport, transaction?: Transaction): Promise<string[]> {
  const differences: string[] = [];
  const collection = await Collection.findByPk(batch.collectionId, { attributes: ["name"], transaction });
  if (collection && collection.name !== collectionName) differences.push(`collection: stored in "${collection.name}", this upload names "${collectionName}"`);
  if (batch.profileName !== report.profile.name || (batch.profileHash ?? null) !== (report.profile.hash ?? null)) {
    differences.push(`profile: stored "${batch.profileName}"${batch.profileHash ? ` (${batch.profileHash})` : ""}, this upload "${report.profile.name}"${report.profile.hash ? ` (${report.profile.hash})` : ""}`);
  }
  const started = new Date(report.startedAt).getTime();
  const finished = new Date(report.finishedAt).getTime();
  if (batch.startedAt.getTime() !== started || batch.finishedAt.getTime() !== finished) {
    differences.push(`scan time: stored ${batch.startedAt.toISOString()}–${batch.finishedAt.toISOString()}, this upload ${report.startedAt}–${report.finishedAt}`);
  }
  if (batch.fileCount !== report.files.length) differences.push(`file count: stored ${batch.fileCount}, this upload ${report.files.length}`);

  const stored = await sequelize.query<{ path: string; sha256: string | null }>(`select path, sha256 from file_results where batch_id = $1`, {
    bind: [batch.id],
    type: QueryTypes.SELECT,
    transaction,
  });
  const storedByPath = new Map(stored.map((r) => [r.path, r.sha256]));
  const uploadPaths = new Set(report.files.map((f) => f.path));
  const onlyHere = report.files.filter((f) => !storedByPath.has(f.path)).map((f) => f.path);
  const onlyStored = stored.filter((r) => !uploadPaths.has(r.path)).map((r) => r.path);
  const hashChanged = report.files.filter((f) => storedByPath.has(f.path) && (storedByPath.get(f.path) ?? null) !== (f.sha256 ?? null)).map((f) => f.path);
  if (onlyHere.length) differences.push(`files only in this upload: ${list(onlyHere)}`);
  if (onlyStored.length) differences.push(`files only in the stored batch: ${list(onlyStored)}`);
  if (hashChanged.length) differences.push(`SHA-256 differs for ${list(hashChanged)}`);
  return differences;
}

export function batchKeyConflict(batchKey: string, batchId: number, differences: string[]): HttpError {
  return new HttpError(
    409,
    "batch_key_conflict",
    `batch key "${batchKey}" was already used for batch ${batchId} with other content — ${differences.join("; ")}. Nothing was stored; upload with a new batch key to keep both.`,
    { batchId, differences },
  );
}
