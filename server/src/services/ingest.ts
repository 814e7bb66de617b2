/**
 * Ingest of one uploaded scan report as a new batch: artefacts first, then the batch and every file row
 * in ONE transaction (storing the files, their artefacts, fixity and duplicates is fileResultStore.ts's,
 * shared with a worker's job result). Idempotent on (uploader, batch key): the same content again is a
 * repeat, other content under the same key a 409 (batchKeyConflict.ts).
 */
import { UniqueConstraintError, type Transaction } from "sequelize";
import type { IngestResultDto } from "@tidemark/shared/types/api";
import type { ScanReport } from "@tidemark/shared/types/report";
import type { AppContext } from "../context.ts";
import { Batch, type User } from "../models/index.ts";
import type { Actor } from "./actor.ts";
import type { WrittenArtefacts } from "./artefacts.ts";
import { recordAudit } from "./audit.ts";
import { batchDifferences, batchKeyConflict } from "./batchKeyConflict.ts";
import { lockCollection, storeFileResults, upsertCollection, withArtefacts } from "./fileResultStore.ts";
import type { ArtefactPart } from "./ingestValidation.ts";
import { notifyFailingBatch } from "./notifications.ts";

export interface IngestInput {
  uploader: User;
  collectionName: string;
  batchKey: string;
  report: ScanReport;
  /** Every artefact part (overview PNGs, level grids, loudness curves, close-ups, excerpts), checked. */
  artefacts: ArtefactPart[];
}

/** The earlier upload under this key: the same content is a repeat (created: false), other content a 409. */
async function existingBatch(ctx: AppContext, input: IngestInput, transaction?: Transaction): Promise<IngestResultDto | null> {
  const batch = await Batch.findOne({ where: { uploaderId: input.uploader.id, batchKey: input.batchKey }, transaction });
  if (!batch) return null;
  const differences = await batchDifferences(ctx.sequelize, batch, input.collectionName, input.report, transaction);
  if (differences.length) throw batchKeyConflict(input.batchKey, batch.id, differences);
  return { batchId: batch.id, created: false, files: batch.fileCount };
}

async function storeBatch(ctx: AppContext, actor: Actor, input: IngestInput, keys: WrittenArtefacts, transaction: Transaction): Promise<IngestResultDto | { batch: Batch }> {
  const { report, uploader, batchKey } = input;
  await lockCollection(ctx, input.collectionName, transaction);
  const repeat = await existingBatch(ctx, input, transaction);
  if (repeat) return repeat;

  const collectionId = await upsertCollection(ctx, actor, input.collectionName, transaction);
  const counts = { pass: 0, warn: 0, fail: 0, error: 0 };
  let batch: Batch | undefined;
  const stored = await storeFileResults(
    ctx,
    actor,
    {
      collectionId,
      files: report.files,
      keys,
      batchFor: async (verdicts) => {
        for (const v of verdicts) counts[v]++;
        batch = await Batch.create(
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
            fileCount: verdicts.length,
            passCount: counts.pass,
            warnCount: counts.warn,
            failCount: counts.fail,
            errorCount: counts.error,
            profileLimits: report.profile.limits ?? null,
          },
          { transaction },
        );
        return batch.id;
      },
    },
    transaction,
  );
  await recordAudit(
    actor,
    {
      action: "batch.ingest",
      targetType: "batch",
      targetId: stored.batchId,
      details: { collection: input.collectionName, batchKey, files: stored.ids.length, ...counts, fixityChanged: stored.fixityChanged, objects: input.artefacts.length, closeups: stored.closeups, ...stored.duplicates },
    },
    transaction,
  );
  return { batch: batch! };
}

export async function ingestBatch(ctx: AppContext, actor: Actor, input: IngestInput): Promise<IngestResultDto> {
  const repeat = await existingBatch(ctx, input);
  if (repeat) return repeat;

  let outcome: Awaited<ReturnType<typeof storeBatch>>;
  try {
    outcome = await withArtefacts(ctx, input.artefacts, (keys, transaction) => storeBatch(ctx, actor, input, keys, transaction), (o) => "batch" in o);
  } catch (e) {
    // The same batch key committed by a concurrent upload in the meantime.
    if (e instanceof UniqueConstraintError) {
      const existing = await existingBatch(ctx, input);
      if (existing) return existing;
    }
    throw e;
  }
  if (!("batch" in outcome)) return outcome;
  const { batch } = outcome;
  if (batch.failCount + batch.errorCount > 0) {
    await notifyFailingBatch(ctx, batch.id).catch((e: unknown) => ctx.logger.error(`failing-batch e-mail for batch ${batch.id}: ${String(e)}`));
  }
  return { batchId: batch.id, created: true, files: batch.fileCount };
}
