/**
 * Ingest of one scan report: artefacts first (under a fresh upload folder), then every row in ONE
 * transaction. If the transaction fails the artefacts are deleted; if the process dies in between, the
 * startup sweep (orphanSweep.ts) removes them. Idempotent on (uploader, batch key): the same content
 * again is a repeat, other content under the same key a 409 (batchKeyConflict.ts).
 */
import type { Response } from "express";
import { QueryTypes, UniqueConstraintError, type Transaction } from "sequelize";
import type { IngestResultDto } from "@tidemark/shared/types/api";
import type { Finding as ReportFinding, ScanReport, Verdict } from "@tidemark/shared/types/report";
import type { AppContext } from "../context.ts";
import { Batch, type User } from "../models/index.ts";
import { newUploadId } from "../storage/objectKeys.ts";
import { deleteObjects, linksFor, writeArtefacts, type WrittenArtefacts } from "./artefacts.ts";
import { recordAudit } from "./audit.ts";
import { batchDifferences, batchKeyConflict } from "./batchKeyConflict.ts";
import { recordBatchDuplicates } from "./duplicatesIngest.ts";
import type { ArtefactPart } from "./ingestValidation.ts";
import { fileRowOf, insertFileRows, insertFindingRows, pathKey, type FileRow } from "./ingestRows.ts";
import { notifyFailingBatch } from "./notifications.ts";

export interface IngestInput {
  uploader: User;
  collectionName: string;
  batchKey: string;
  report: ScanReport;
  /** Every artefact part (overview PNGs, level grids, loudness curves, close-ups, excerpts), checked. */
  artefacts: ArtefactPart[];
}

interface PreviousScan {
  id: number;
  batch_id: number;
  path: string;
  sha256: string | null;
}

/** The earlier upload under this key: the same content is a repeat (created: false), other content a 409. */
async function existingBatch(ctx: AppContext, input: IngestInput, transaction?: Transaction): Promise<IngestResultDto | null> {
  const batch = await Batch.findOne({ where: { uploaderId: input.uploader.id, batchKey: input.batchKey }, transaction });
  if (!batch) return null;
  const differences = await batchDifferences(ctx.sequelize, batch, input.collectionName, input.report, transaction);
  if (differences.length) throw batchKeyConflict(input.batchKey, batch.id, differences);
  return { batchId: batch.id, created: false, files: batch.fileCount };
}

/** Latest scan of each path in the collection, and latest scan with a known SHA-256 (for fixity). */
async function previousScans(ctx: AppContext, collectionId: number, paths: string[], transaction: Transaction) {
  const query = (extra: string) =>
    ctx.sequelize.query<PreviousScan & { path_bytes: string | null }>(
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

async function upsertCollection(ctx: AppContext, res: Response, name: string, transaction: Transaction): Promise<number> {
  const inserted = await ctx.sequelize.query<{ id: number }>(
    `insert into collections (name) values ($1) on conflict (name) do nothing returning id`,
    { bind: [name], type: QueryTypes.SELECT, transaction },
  );
  if (inserted.length) {
    await recordAudit(res, { action: "collection.create", targetType: "collection", targetId: inserted[0].id, details: { name } }, transaction);
    return inserted[0].id;
  }
  const [found] = await ctx.sequelize.query<{ id: number }>(`select id from collections where name = $1`, {
    bind: [name],
    type: QueryTypes.SELECT,
    transaction,
  });
  return found.id;
}

async function storeRows(ctx: AppContext, res: Response, input: IngestInput, keys: WrittenArtefacts, transaction: Transaction): Promise<IngestResultDto | { batch: Batch; fixityChanged: number }> {
  const { report, uploader, batchKey } = input;
  // Serialises ingests into one collection: fixity history and collection creation stay consistent.
  await ctx.sequelize.query(`select pg_advisory_xact_lock(hashtext($1))`, { bind: [`tidemark.collection:${input.collectionName}`], transaction });
  const repeat = await existingBatch(ctx, input, transaction);
  if (repeat) return repeat;

  const collectionId = await upsertCollection(ctx, res, input.collectionName, transaction);
  const { latest, latestHashed } = await previousScans(ctx, collectionId, report.files.map((f) => f.path), transaction);

  const fixityEvents: { index: number; previous: PreviousScan }[] = [];
  const prepared = report.files.map((file, index) => {
    const findings: ReportFinding[] = [...file.findings];
    let verdict: Verdict = file.verdict;
    const hashed = latestHashed.get(pathKey(file.path, file.pathBytes));
    if (hashed?.sha256 && file.sha256 && hashed.sha256 !== file.sha256) {
      findings.push({
        code: "fixity-changed",
        severity: "fail",
        channel: null,
        startSeconds: null,
        endSeconds: null,
        message: `SHA-256 differs from the scan in batch ${hashed.batch_id} (file result ${hashed.id}): was ${hashed.sha256}, now ${file.sha256}`,
      });
      if (verdict === "pass" || verdict === "warn") verdict = "fail";
      fixityEvents.push({ index, previous: hashed });
    }
    return { file, findings, verdict };
  });

  const counts = { pass: 0, warn: 0, fail: 0, error: 0 };
  for (const p of prepared) counts[p.verdict]++;
  const batch = await Batch.create(
    {
      collectionId,
      uploaderId: uploader.id,
      batchKey,
      profileName: report.profile.name,
      profileHash: report.profile.hash ?? null,
      toolName: report.tool.name,
      toolVersion: report.tool.version,
      startedAt: new Date(report.startedAt),
      finishedAt: new Date(report.finishedAt),
      fileCount: prepared.length,
      passCount: counts.pass,
      warnCount: counts.warn,
      failCount: counts.fail,
      errorCount: counts.error,
      profileLimits: report.profile.limits ?? null,
    },
    { transaction },
  );

  const fileRows: FileRow[] = prepared.map(({ file, findings, verdict }, index) =>
    fileRowOf(
      file,
      { findings, verdict },
      { previousId: latest.get(pathKey(file.path, file.pathBytes))?.id ?? null, ...linksFor(file, index, keys) },
    ),
  );
  const ids = await insertFileRows(ctx.sequelize, batch.id, collectionId, fileRows, transaction);
  // Appends possible-duplicate findings to `prepared`, so they are inserted with the others below.
  const duplicates = await recordBatchDuplicates(ctx.sequelize, res, collectionId, prepared.map((p, i) => ({ report: p.file, fileResultId: ids[i], findings: p.findings })), transaction);
  await insertFindingRows(
    ctx.sequelize,
    prepared.flatMap(({ findings }, index) => findings.map((f) => ({ ...f, file_result_id: ids[index] }))),
    transaction,
  );

  for (const { index, previous } of fixityEvents) {
    const file = report.files[index];
    await recordAudit(
      res,
      {
        action: "file.fixity_changed",
        targetType: "file",
        targetId: ids[index],
        details: { path: file.path, previousFileResultId: previous.id, previousSha256: previous.sha256, sha256: file.sha256 },
      },
      transaction,
    );
  }
  await recordAudit(
    res,
    {
      action: "batch.ingest",
      targetType: "batch",
      targetId: batch.id,
      details: { collection: input.collectionName, batchKey, files: prepared.length, ...counts, fixityChanged: fixityEvents.length, objects: input.artefacts.length, closeups: fileRows.reduce((n, r) => n + r.closeups.length, 0), ...duplicates },
    },
    transaction,
  );
  return { batch, fixityChanged: fixityEvents.length };
}

export async function ingestBatch(ctx: AppContext, res: Response, input: IngestInput): Promise<IngestResultDto> {
  const repeat = await existingBatch(ctx, input);
  if (repeat) return repeat;

  const written: string[] = [];
  let outcome: Awaited<ReturnType<typeof storeRows>>;
  try {
    const keys = await writeArtefacts(ctx, newUploadId(), input.artefacts, written);
    outcome = await ctx.sequelize.transaction((transaction) => storeRows(ctx, res, input, keys, transaction));
  } catch (e) {
    await deleteObjects(ctx, written);
    // The same batch key committed by a concurrent upload in the meantime.
    if (e instanceof UniqueConstraintError) {
      const existing = await existingBatch(ctx, input);
      if (existing) return existing;
    }
    throw e;
  }
  if (!("batch" in outcome)) {
    await deleteObjects(ctx, written);
    return outcome;
  }
  const { batch } = outcome;
  if (batch.failCount + batch.errorCount > 0) {
    await notifyFailingBatch(ctx, batch.id).catch((e: unknown) => ctx.logger.error(`failing-batch e-mail for batch ${batch.id}: ${String(e)}`));
  }
  return { batchId: batch.id, created: true, files: batch.fileCount };
}
