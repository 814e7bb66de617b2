/**
 * Storing file results, for both ways they arrive: an uploaded batch (ingest.ts) and a distributed
 * worker's job result (runsResults.ts). What the two share lives here and nowhere else: the collection
 * lock and upsert, the artefact objects written before the transaction and deleted when nothing is kept,
 * the previous-scan lookup, the fixity rule (shared/src/fixity/fixityRule.ts), the file and finding rows,
 * the duplicates index and the fixity audit entries. The callers keep only what is theirs: a batch's key
 * and counts, a job's acknowledgement.
 */
import { QueryTypes, type Transaction } from "sequelize";
import { judgeFixity } from "@tidemark/shared/fixity/fixityRule";
import type { FileReport, Verdict } from "@tidemark/shared/types/report";
import type { AppContext } from "../context.ts";
import { newUploadId } from "../storage/objectKeys.ts";
import type { Actor } from "./actor.ts";
import { deleteObjects, linksFor, writeArtefacts, type WrittenArtefacts } from "./artefacts.ts";
import { recordAudit } from "./audit.ts";
import { recordBatchDuplicates, type DuplicateStats } from "./duplicatesIngest.ts";
import type { ArtefactPart } from "./ingestValidation.ts";
import { fileRowOf, insertFileRows, insertFindingRows, pathKey } from "./ingestRows.ts";

/** Serialises the writers of one collection (ingest, job results, run creation): fixity history and collection creation stay ordered. */
export async function lockCollection(ctx: AppContext, name: string, transaction: Transaction): Promise<void> {
  await ctx.sequelize.query(`select pg_advisory_xact_lock(hashtext($1))`, { bind: [`tidemark.collection:${name}`], transaction });
}

/** The collection's id, made (and audited) on first use. Call under lockCollection. */
export async function upsertCollection(ctx: AppContext, actor: Actor, name: string, transaction: Transaction): Promise<number> {
  const inserted = await ctx.sequelize.query<{ id: number }>(
    `insert into collections (name) values ($1) on conflict (name) do nothing returning id`,
    { bind: [name], type: QueryTypes.SELECT, transaction },
  );
  if (inserted.length) {
    await recordAudit(actor, { action: "collection.create", targetType: "collection", targetId: inserted[0].id, details: { name } }, transaction);
    return inserted[0].id;
  }
  const [found] = await ctx.sequelize.query<{ id: number }>(`select id from collections where name = $1`, {
    bind: [name],
    type: QueryTypes.SELECT,
    transaction,
  });
  return found.id;
}

/**
 * Writes the artefact parts under a fresh upload folder, then runs `store` in one transaction. The objects
 * are deleted again when it throws, or when `kept(result)` says nothing new was stored (a repeat); if the
 * process dies in between, the start-up sweep (orphanSweep.ts) removes them.
 */
export async function withArtefacts<T>(
  ctx: AppContext,
  parts: ArtefactPart[],
  store: (keys: WrittenArtefacts, transaction: Transaction) => Promise<T>,
  kept: (result: T) => boolean,
): Promise<T> {
  const written: string[] = [];
  let result: T;
  try {
    const keys = await writeArtefacts(ctx, newUploadId(), parts, written);
    result = await ctx.sequelize.transaction((transaction) => store(keys, transaction));
  } catch (e) {
    await deleteObjects(ctx, written);
    throw e;
  }
  if (!kept(result)) await deleteObjects(ctx, written);
  return result;
}

interface PreviousScan {
  id: number;
  batch_id: number;
  path: string;
  path_bytes: string | null;
  sha256: string | null;
}

/** Latest scan of each path (and exact name bytes) in the collection, and latest scan with a known SHA-256 (for fixity). */
async function previousScans(ctx: AppContext, collectionId: number, paths: string[], transaction: Transaction) {
  const query = (extra: string) =>
    ctx.sequelize.query<PreviousScan>(
      `select distinct on (path, path_bytes) id, batch_id, path, path_bytes, sha256 from file_results
        where collection_id = $1 and path = any($2::text[]) ${extra}
        order by path, path_bytes, id desc`,
      { bind: [collectionId, paths], type: QueryTypes.SELECT, transaction },
    );
  const [latest, latestHashed] = paths.length ? await Promise.all([query(""), query("and sha256 is not null")]) : [[], []];
  return {
    latest: new Map(latest.map((r) => [pathKey(r.path, r.path_bytes), r])),
    latestHashed: new Map(latestHashed.map((r) => [pathKey(r.path, r.path_bytes), r])),
  };
}

export interface StoreFilesInput {
  collectionId: number;
  files: FileReport[];
  /** The artefact objects already written (withArtefacts), by file index. */
  keys: WrittenArtefacts;
  /** The batch the rows join, asked for once the verdicts are final (fixity applied) and before any row is written. */
  batchFor: (verdicts: Verdict[]) => Promise<number>;
}

export interface StoredFiles {
  batchId: number;
  /** File result ids, in the order of the files given. */
  ids: number[];
  /** Final verdicts, in the same order. */
  verdicts: Verdict[];
  fixityChanged: number;
  closeups: number;
  duplicates: DuplicateStats;
}

/**
 * Stores the files of one report with their findings, artefact links, fixity comparison and duplicate
 * links, inside the caller's transaction. Call under lockCollection.
 */
export async function storeFileResults(ctx: AppContext, actor: Actor, input: StoreFilesInput, transaction: Transaction): Promise<StoredFiles> {
  const { collectionId, files } = input;
  const { latest, latestHashed } = await previousScans(ctx, collectionId, files.map((f) => f.path), transaction);
  const judged = files.map((file) => {
    const key = pathKey(file.path, file.pathBytes);
    const hashed = latestHashed.get(key);
    return {
      file,
      previousId: latest.get(key)?.id ?? null,
      ...judgeFixity(file, hashed ? { fileResultId: hashed.id, batchId: hashed.batch_id, sha256: hashed.sha256 } : null),
    };
  });
  const verdicts = judged.map((j) => j.verdict);
  const batchId = await input.batchFor(verdicts);

  const rows = judged.map((j, index) => fileRowOf(j.file, j, { previousId: j.previousId, ...linksFor(j.file, index, input.keys) }));
  const ids = await insertFileRows(ctx.sequelize, batchId, collectionId, rows, transaction);
  // Appends possible-duplicate findings to each file's list, so they are inserted with the others below.
  const duplicates = await recordBatchDuplicates(ctx.sequelize, actor, collectionId, judged.map((j, i) => ({ report: j.file, fileResultId: ids[i], findings: j.findings })), transaction);
  await insertFindingRows(
    ctx.sequelize,
    judged.flatMap(({ findings }, index) => findings.map((f) => ({ ...f, file_result_id: ids[index] }))),
    transaction,
  );

  let fixityChanged = 0;
  for (const [index, { file, changedFrom }] of judged.entries()) {
    if (!changedFrom) continue;
    fixityChanged++;
    await recordAudit(
      actor,
      {
        action: "file.fixity_changed",
        targetType: "file",
        targetId: ids[index],
        details: { path: file.path, previousFileResultId: changedFrom.fileResultId, previousSha256: changedFrom.sha256, sha256: file.sha256 },
      },
      transaction,
    );
  }
  return { batchId, ids, verdicts, fixityChanged, closeups: rows.reduce((n, r) => n + r.closeups.length, 0), duplicates };
}
