/**
 * Runs: created (or found again by collection and name) by `tidemark enqueue`, then filled with one job
 * per file. Re-enqueuing skips files already done with the same size and mtime, and files still waiting;
 * a dead-lettered file is queued again; a done file that changed since is reported, not queued, because
 * the run's batch holds one result per path.
 */
import { randomUUID } from "node:crypto";
import { Op, type Transaction } from "sequelize";
import type {
  CreateRunRequest,
  EnqueueFileDto,
  EnqueueFilesResultDto,
  ScanJobDto,
  ScanJobState,
  ScanRunDetailDto,
  ScanRunDto,
  Page,
} from "@tidemark/shared/types/api";
import type { ReportSummary } from "@tidemark/shared/types/report";
import type { AppContext } from "../context.ts";
import { conflict, forbidden, notFound } from "../errors.ts";
import { Batch, Collection, User } from "../models/index.ts";
import { orderedJobId } from "../queue/jobIds.ts";
import { jobQueueFor } from "../queue/jobQueue.ts";
import { ScanJob, ScanRun } from "../models/index.ts";
import { actingUser, isAdmin, type Actor } from "./actor.ts";
import { recordAudit } from "./audit.ts";
import { lockCollection, upsertCollection } from "./fileResultStore.ts";
import { pathKey } from "./ingestRows.ts";
import { toScanJobDto, toScanRunDetailDto, toScanRunDto } from "./runsDto.ts";
import { runStats } from "./runsStatus.ts";
import { checkRunProfile } from "./runsValidation.ts";

const DETAIL_JOB_LIMIT = 200;
const runIncludes = [
  { model: Collection, as: "collection" },
  { model: User, as: "creator" },
];

async function verdictsOf(batchIds: number[]): Promise<Map<number, ReportSummary>> {
  const batches = batchIds.length ? await Batch.findAll({ where: { id: batchIds } }) : [];
  return new Map(batches.map((b) => [b.id, { files: b.fileCount, pass: b.passCount, warn: b.warnCount, fail: b.failCount, error: b.errorCount }]));
}

export async function runDtos(ctx: AppContext, runs: ScanRun[]): Promise<ScanRunDto[]> {
  const [stats, verdicts] = await Promise.all([runStats(ctx.sequelize, runs.map((r) => r.id)), verdictsOf(runs.map((r) => r.batchId))]);
  const none: ReportSummary = { files: 0, pass: 0, warn: 0, fail: 0, error: 0 };
  return runs.map((run) => toScanRunDto(run, stats.get(run.id)!, verdicts.get(run.batchId) ?? none));
}

export async function loadRun(id: number, transaction?: Transaction): Promise<ScanRun> {
  const run = await ScanRun.findByPk(id, { include: runIncludes, transaction });
  if (!run) throw notFound("run", id);
  return run;
}

/** Files are added to a run only by the user who created it (any of their tokens) or an admin: 403, audited. */
export async function assertRunOwner(actor: Actor, runId: number): Promise<void> {
  const user = actingUser(actor);
  const run = await ScanRun.findByPk(runId, { attributes: ["id", "createdBy"] });
  if (!run) throw notFound("run", runId);
  if (run.createdBy === user.id || isAdmin(actor)) return;
  await recordAudit(actor, { action: "run.forbidden", targetType: "run", targetId: runId, details: { attempted: "add files" } });
  throw forbidden(`run ${runId} was created by another user; only they or an admin may add files to it (choose another --run name)`, "not_run_owner");
}

export async function createOrFindRun(ctx: AppContext, actor: Actor, input: CreateRunRequest): Promise<{ run: ScanRunDto; created: boolean }> {
  const profile = checkRunProfile(input.profile);
  const user = actingUser(actor);
  const outcome = await ctx.sequelize.transaction(async (transaction) => {
    await lockCollection(ctx, input.collection, transaction);
    const existingCollection = await Collection.findOne({ where: { name: input.collection }, transaction });
    const existing = existingCollection ? await ScanRun.findOne({ where: { collectionId: existingCollection.id, name: input.name }, transaction }) : null;
    if (existing) {
      if (existing.root !== input.root) {
        throw conflict(`run "${input.name}" of "${input.collection}" scans ${existing.root}, not ${input.root}; give another run name`, "run_mismatch");
      }
      if (existing.profileHash !== input.profile.hash) {
        throw conflict(`run "${input.name}" of "${input.collection}" measures with profile ${existing.profileName} (${existing.profileHash.slice(0, 12)}…), not this one; give another run name`, "run_mismatch");
      }
      return { id: existing.id, created: false };
    }
    const cid = await upsertCollection(ctx, actor, input.collection, transaction);
    const now = new Date();
    // A run's batch is there from the start, empty, so the Batches view shows it filling up.
    const batch = await Batch.create(
      {
        collectionId: cid,
        uploaderId: user.id,
        batchKey: `run-pending-${randomUUID()}`,
        profileName: profile.name,
        profileHash: input.profile.hash,
        toolName: input.tool.name,
        toolVersion: input.tool.version,
        startedAt: now,
        finishedAt: now,
        fileCount: 0,
        passCount: 0,
        warnCount: 0,
        failCount: 0,
        errorCount: 0,
      },
      { transaction },
    );
    const run = await ScanRun.create(
      {
        collectionId: cid,
        batchId: batch.id,
        createdBy: user.id,
        name: input.name,
        root: input.root,
        profileName: profile.name,
        profileHash: input.profile.hash,
        profile: profile as unknown as Record<string, unknown>,
        startedAt: null,
        finishedAt: null,
        notifiedAt: null,
      },
      { transaction },
    );
    await batch.update({ batchKey: `run ${run.id}: ${input.name}` }, { transaction });
    await recordAudit(
      actor,
      { action: "run.create", targetType: "run", targetId: run.id, details: { collection: input.collection, name: input.name, root: input.root, profile: profile.name, batchId: batch.id } },
      transaction,
    );
    return { id: run.id, created: true };
  });
  const [dto] = await runDtos(ctx, [await loadRun(outcome.id)]);
  return { run: dto, created: outcome.created };
}

export async function enqueueFiles(ctx: AppContext, actor: Actor, runId: number, files: EnqueueFileDto[]): Promise<EnqueueFilesResultDto> {
  const seen = new Set<string>();
  for (const f of files) {
    // Two names that are not UTF-8 may show the same path; their bytes tell them apart.
    const key = pathKey(f.path, f.pathBytes);
    if (seen.has(key)) throw conflict(`files lists "${f.path}" twice`, "duplicate_path");
    seen.add(key);
  }
  const queue = jobQueueFor(ctx.sequelize);
  return ctx.sequelize.transaction(async (transaction) => {
    // One enqueue at a time per run, so two CLIs adding the same path cannot both make a job for it.
    const run = await ScanRun.findByPk(runId, { transaction, lock: transaction.LOCK.UPDATE });
    if (!run) throw notFound("run", runId);
    const existing = new Map(
      (await ScanJob.findAll({ where: { runId, path: files.map((f) => f.path) }, transaction })).map((j) => [pathKey(j.path, j.pathBytes), j]),
    );
    const result: EnqueueFilesResultDto = { added: 0, requeued: 0, alreadyDone: 0, pending: 0, changed: [] };
    const toSend: { queueJobId: string; data: { scanJobId: number; runId: number; queueJobId: string } }[] = [];
    const fresh: { file: EnqueueFileDto; queueJobId: string }[] = [];
    for (const file of files) {
      const job = existing.get(pathKey(file.path, file.pathBytes));
      const same = job !== undefined && Number(job.sizeBytes) === file.sizeBytes && job.mtimeMs === file.mtimeMs;
      if (!job) {
        fresh.push({ file, queueJobId: orderedJobId() });
      } else if (job.state === "done") {
        if (same) result.alreadyDone += 1;
        else result.changed.push(file.path);
      } else if (job.state === "failed") {
        const queueJobId = orderedJobId();
        await job.update({ queueJobId, state: "queued", sizeBytes: file.sizeBytes, mtimeMs: file.mtimeMs, expiresAt: null, heartbeatAt: null, failures: 0, unreachableBy: [] }, { transaction });
        toSend.push({ queueJobId, data: { scanJobId: job.id, runId, queueJobId } });
        result.requeued += 1;
      } else {
        // Queued or being scanned: the scan reads whatever is there, so only the record is brought up to date.
        if (!same) await job.update({ sizeBytes: file.sizeBytes, mtimeMs: file.mtimeMs }, { transaction });
        result.pending += 1;
      }
    }
    if (fresh.length) {
      const made = await ScanJob.bulkCreate(
        fresh.map(({ file, queueJobId }) => ({
          runId,
          path: file.path,
          pathBytes: file.pathBytes ?? null,
          sizeBytes: file.sizeBytes,
          mtimeMs: file.mtimeMs,
          queueJobId,
          worker: null,
          lastError: null,
          claimedAt: null,
          expiresAt: null,
          doneAt: null,
          fileResultId: null,
        })),
        { transaction, returning: true },
      );
      for (const job of made) toSend.push({ queueJobId: job.queueJobId, data: { scanJobId: job.id, runId, queueJobId: job.queueJobId } });
      result.added = made.length;
    }
    await queue.insert(toSend, transaction);
    if (toSend.length && run.finishedAt) await run.update({ finishedAt: null, notifiedAt: null }, { transaction });
    await recordAudit(
      actor,
      {
        action: "run.enqueue",
        targetType: "run",
        targetId: runId,
        details: { added: result.added, requeued: result.requeued, alreadyDone: result.alreadyDone, pending: result.pending, changed: result.changed.length },
      },
      transaction,
    );
    return result;
  });
}

export async function listRuns(ctx: AppContext, query: { collection?: number; page: number; pageSize: number }): Promise<Page<ScanRunDto>> {
  const where = query.collection ? { collectionId: query.collection } : {};
  const [total, rows] = await Promise.all([
    ScanRun.count({ where }),
    ScanRun.findAll({ where, include: runIncludes, order: [["createdAt", "DESC"], ["id", "DESC"]], limit: query.pageSize, offset: (query.page - 1) * query.pageSize }),
  ]);
  return { items: await runDtos(ctx, rows), total, page: query.page, pageSize: query.pageSize };
}

export async function runDetail(ctx: AppContext, id: number): Promise<ScanRunDetailDto> {
  const run = await loadRun(id);
  const [[dto], failed, active, returned] = await Promise.all([
    runDtos(ctx, [run]),
    ScanJob.findAll({ where: { runId: id, state: "failed" }, order: [["updatedAt", "ASC"], ["id", "ASC"]], limit: DETAIL_JOB_LIMIT }),
    ScanJob.findAll({ where: { runId: id, state: "active" }, order: [["claimedAt", "ASC"], ["id", "ASC"]], limit: DETAIL_JOB_LIMIT }),
    ScanJob.findAll({ where: { runId: id, state: "queued", lastError: { [Op.ne]: null } }, order: [["updatedAt", "DESC"], ["id", "DESC"]], limit: DETAIL_JOB_LIMIT }),
  ]);
  return toScanRunDetailDto(dto, failed, active, returned);
}

export async function listRunJobs(id: number, query: { state?: ScanJobState; page: number; pageSize: number }): Promise<Page<ScanJobDto>> {
  await loadRun(id);
  const where = { runId: id, ...(query.state ? { state: query.state } : {}) };
  const [total, rows] = await Promise.all([
    ScanJob.count({ where }),
    ScanJob.findAll({ where, order: [["path", "ASC"], ["id", "ASC"]], limit: query.pageSize, offset: (query.page - 1) * query.pageSize }),
  ]);
  return { items: rows.map(toScanJobDto), total, page: query.page, pageSize: query.pageSize };
}

