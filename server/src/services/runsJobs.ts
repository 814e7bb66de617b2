/**
 * A worker's side of a job: claim (pg-boss fetch), fail (pg-boss retries or dead-letters it) and release
 * (straight back to the queue), and a supervisor's retry of dead-lettered jobs. Each runs in one
 * transaction with the pg-boss command, so the queue and our job rows never disagree after a crash.
 */
import path from "node:path";
import type { Response } from "express";
import { QueryTypes, type Transaction } from "sequelize";
import type { ClaimedJobDto, JobStateDto, RunProfileDto } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { conflict, notFound } from "../errors.ts";
import { Collection } from "../models/index.ts";
import { orderedJobId } from "../queue/jobIds.ts";
import { jobQueueFor, type ScanJobData } from "../queue/jobQueue.ts";
import { ScanJob, ScanJobAttempt, ScanRun, type AttemptOutcome } from "../queue/models/index.ts";
import { recordAudit } from "./audit.ts";
import { markRunFinishedIfDone } from "./runsStatus.ts";

/** Ends the open attempt(s) of a job; an earlier claim still open when a new one arrives had expired. */
export async function closeAttempts(jobId: number, outcome: AttemptOutcome, message: string | null, transaction: Transaction, attempt?: number): Promise<void> {
  await ScanJobAttempt.update(
    { endedAt: new Date(), outcome, message },
    { where: { jobId, endedAt: null, ...(attempt !== undefined ? { attempt } : {}) }, transaction },
  );
}

/** Joins the run's root and the job's relative path in the root's own style (POSIX or Windows). */
export function absolutePath(root: string, relPath: string): string {
  const windows = /^[A-Za-z]:[\\/]/.test(root);
  return windows ? path.win32.join(root, ...relPath.split("/")) : path.posix.join(root, relPath);
}

export async function claimJobs(ctx: AppContext, res: Response, worker: string, max: number): Promise<ClaimedJobDto[]> {
  const queue = jobQueueFor(ctx.sequelize);
  return ctx.sequelize.transaction(async (transaction) => {
    const fetched = await queue.fetch(max, transaction);
    if (fetched.length === 0) return [];
    const jobs = await ScanJob.findAll({
      where: { queueJobId: fetched.map((f) => f.queueJobId) },
      include: [{ model: ScanRun, as: "run", include: [{ model: Collection, as: "collection" }] }],
      transaction,
      lock: { level: transaction.LOCK.UPDATE, of: ScanJob },
    });
    const byQueueId = new Map(jobs.map((j) => [j.queueJobId, j]));
    const claimed: ClaimedJobDto[] = [];
    for (const f of fetched) {
      const job = byQueueId.get(f.queueJobId);
      // A queue entry without a live row (its run was removed, or the file is done): nothing to scan.
      if (!job || job.state === "done" || job.state === "failed") {
        await queue.finish(f.queueJobId, { skipped: true }, transaction);
        continue;
      }
      await closeAttempts(job.id, "expired", "no result before the visibility timeout", transaction);
      const attempt = job.attempts + 1;
      await job.update({ state: "active", attempts: attempt, worker, claimedAt: new Date(), expiresAt: f.expiresAt }, { transaction });
      await ScanJobAttempt.create({ jobId: job.id, attempt, worker, endedAt: null, outcome: null, message: null }, { transaction });
      const run = job.run!;
      claimed.push({
        id: job.id,
        attempt,
        runId: run.id,
        collection: run.collection!.name,
        path: job.path,
        absPath: absolutePath(run.root, job.path),
        sizeBytes: Number(job.sizeBytes),
        mtimeMs: job.mtimeMs,
        expiresAt: f.expiresAt.toISOString(),
        profile: { name: run.profileName, hash: run.profileHash, definition: run.profile } satisfies RunProfileDto,
      });
    }
    if (claimed.length === 0) return [];
    const runIds = [...new Set(claimed.map((c) => c.runId))];
    await ctx.sequelize.query(`update scan_runs set started_at = now(), updated_at = now() where id = any($1::int[]) and started_at is null`, {
      bind: [runIds],
      type: QueryTypes.UPDATE,
      transaction,
    });
    await recordAudit(res, { action: "jobs.claim", targetType: "job", targetId: claimed.map((c) => c.id).join(","), details: { worker, jobs: claimed.map((c) => ({ id: c.id, attempt: c.attempt })) } }, transaction);
    return claimed;
  });
}

/** The job row, locked, and checked to be the worker's current attempt. */
async function currentAttempt(jobId: number, attempt: number, transaction: Transaction): Promise<ScanJob> {
  const job = await ScanJob.findByPk(jobId, { transaction, lock: transaction.LOCK.UPDATE });
  if (!job) throw notFound("job", jobId);
  if (job.state === "done") throw conflict(`job ${jobId} already has its result`, "job_done");
  if (job.state !== "active" || job.attempts !== attempt) {
    throw conflict(`attempt ${attempt} of job ${jobId} is no longer active (it expired or was released; the job is ${job.state}, attempt ${job.attempts})`, "stale_attempt");
  }
  return job;
}

export async function failJob(ctx: AppContext, res: Response, jobId: number, input: { attempt: number; worker: string; message: string }): Promise<JobStateDto> {
  const queue = jobQueueFor(ctx.sequelize);
  return ctx.sequelize.transaction(async (transaction) => {
    const job = await currentAttempt(jobId, input.attempt, transaction);
    const queueState = await queue.fail(job.queueJobId, { message: input.message, worker: input.worker, attempt: input.attempt }, transaction);
    const state = queueState === "failed" ? "failed" : "queued";
    await job.update({ state, lastError: input.message, expiresAt: null }, { transaction });
    await closeAttempts(job.id, "failed", input.message, transaction, input.attempt);
    await recordAudit(res, { action: "job.fail", targetType: "job", targetId: job.id, details: { worker: input.worker, attempt: input.attempt, message: input.message, state } }, transaction);
    if (state === "failed") await markRunFinishedIfDone(ctx.sequelize, job.runId, transaction);
    return { jobId: job.id, state, attempts: job.attempts };
  });
}

export async function releaseJob(ctx: AppContext, res: Response, jobId: number, input: { attempt: number; worker: string }): Promise<JobStateDto> {
  const queue = jobQueueFor(ctx.sequelize);
  return ctx.sequelize.transaction(async (transaction) => {
    const job = await currentAttempt(jobId, input.attempt, transaction);
    await queue.release(job.queueJobId, transaction);
    await job.update({ state: "queued", expiresAt: null }, { transaction });
    await closeAttempts(job.id, "released", null, transaction, input.attempt);
    await recordAudit(res, { action: "job.release", targetType: "job", targetId: job.id, details: { worker: input.worker, attempt: input.attempt } }, transaction);
    return { jobId: job.id, state: "queued", attempts: job.attempts };
  });
}

/** Dead-lettered jobs back into the queue as fresh pg-boss jobs (a full retry budget each). */
async function requeueFailed(ctx: AppContext, jobs: ScanJob[], transaction: Transaction): Promise<void> {
  const queue = jobQueueFor(ctx.sequelize);
  const sends: { queueJobId: string; data: ScanJobData }[] = [];
  for (const job of jobs) {
    const queueJobId = orderedJobId();
    await job.update({ queueJobId, state: "queued", expiresAt: null }, { transaction });
    sends.push({ queueJobId, data: { scanJobId: job.id, runId: job.runId, queueJobId } });
  }
  await queue.insert(sends, transaction);
  const runIds = [...new Set(jobs.map((j) => j.runId))];
  if (runIds.length) {
    await ctx.sequelize.query(`update scan_runs set finished_at = null, notified_at = null, updated_at = now() where id = any($1::int[])`, {
      bind: [runIds],
      type: QueryTypes.UPDATE,
      transaction,
    });
  }
}

export async function retryJob(ctx: AppContext, res: Response, jobId: number): Promise<JobStateDto> {
  return ctx.sequelize.transaction(async (transaction) => {
    const job = await ScanJob.findByPk(jobId, { transaction, lock: transaction.LOCK.UPDATE });
    if (!job) throw notFound("job", jobId);
    if (job.state !== "failed") throw conflict(`job ${jobId} is ${job.state}; only failed (dead-lettered) jobs can be retried`, "not_failed");
    await requeueFailed(ctx, [job], transaction);
    await recordAudit(res, { action: "job.retry", targetType: "job", targetId: job.id, details: { runId: job.runId, path: job.path, attempts: job.attempts } }, transaction);
    return { jobId: job.id, state: "queued", attempts: job.attempts };
  });
}

export async function retryRun(ctx: AppContext, res: Response, runId: number): Promise<number> {
  return ctx.sequelize.transaction(async (transaction) => {
    const run = await ScanRun.findByPk(runId, { transaction, lock: transaction.LOCK.UPDATE });
    if (!run) throw notFound("run", runId);
    const jobs = await ScanJob.findAll({ where: { runId, state: "failed" }, transaction, lock: transaction.LOCK.UPDATE });
    await requeueFailed(ctx, jobs, transaction);
    await recordAudit(res, { action: "run.retry", targetType: "run", targetId: runId, details: { retried: jobs.length, jobIds: jobs.map((j) => j.id) } }, transaction);
    return jobs.length;
  });
}
