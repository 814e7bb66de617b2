/**
 * A worker's side of a job: claim (pg-boss fetch), heartbeat, fail (back in the queue, or dead-lettered
 * once its failures reach the limit) and release (straight back, no retry spent), and a supervisor's
 * requeue of a held job and retry of dead-lettered jobs. Each runs in one
 * transaction with the pg-boss command, so the queue and our job rows never disagree after a crash.
 */
import path from "node:path";
import { QueryTypes, type Transaction } from "sequelize";
import type { ClaimedJobDto, JobStateDto, RunProfileDto, ScanJobState } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { conflict, forbidden, notFound } from "../errors.ts";
import { Collection } from "../models/index.ts";
import { orderedJobId } from "../queue/jobIds.ts";
import { jobQueueFor, type ScanJobData } from "../queue/jobQueue.ts";
import { ScanJob, ScanJobAttempt, ScanRun, type AttemptOutcome } from "../models/index.ts";
import { isAdmin, type Actor } from "./actor.ts";
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

/** Jobs a claim may look at beyond the ones asked for, passing over files the worker cannot reach. */
const CLAIM_LOOKAHEAD = 16;

export interface ClaimAnswer {
  jobs: ClaimedJobDto[];
  heartbeatIntervalSeconds: number;
}

/** How often a worker should report on its jobs: a few times within the limit, so one lost request is no loss. */
export function heartbeatIntervalSeconds(limitSeconds: number): number {
  return Math.max(0.5, Math.min(15, limitSeconds / 4));
}

export async function claimJobs(ctx: AppContext, actor: Actor, worker: string, max: number): Promise<ClaimAnswer> {
  const queue = jobQueueFor(ctx.sequelize);
  const tokenId = actor.tokenId;
  const jobs = await ctx.sequelize.transaction(async (transaction) => {
    const claimed: ClaimedJobDto[] = [];
    const passedOver: string[] = [];
    /** Runs whose first claim this is (started_at still unset). */
    const starting = new Set<number>();
    // Fetch only what is wanted; fetch again (a little further) only for files this worker cannot reach.
    let budget = max + CLAIM_LOOKAHEAD;
    while (claimed.length < max && budget > 0) {
      const fetched = await queue.fetch(Math.min(max - claimed.length, budget), transaction);
      if (fetched.length === 0) break;
      budget -= fetched.length;
      const jobs = await ScanJob.findAll({
        where: { queueJobId: fetched.map((f) => f.queueJobId) },
        include: [{ model: ScanRun, as: "run", include: [{ model: Collection, as: "collection" }] }],
        transaction,
        lock: { level: transaction.LOCK.UPDATE, of: ScanJob },
      });
      const byQueueId = new Map(jobs.map((j) => [j.queueJobId, j]));
      for (const f of fetched) {
        const job = byQueueId.get(f.queueJobId);
        // A queue entry without a live row (its run was removed, or the file is done): nothing to scan.
        if (!job || job.state === "done" || job.state === "failed") {
          await queue.finish(f.queueJobId, { skipped: true }, transaction);
          continue;
        }
        // A file this worker said it cannot reach: back in its place (after this claim) for others.
        if (job.unreachableBy.includes(worker)) {
          passedOver.push(f.queueJobId);
          continue;
        }
        // A job never claimed before has no attempt to close (attempts are only made here): one query less per file.
        if (job.attempts > 0) await closeAttempts(job.id, "expired", "no result before the visibility timeout", transaction);
        const attempt = job.attempts + 1;
        const now = new Date();
        await job.update({ state: "active", attempts: attempt, worker, claimedAt: now, heartbeatAt: now, expiresAt: f.expiresAt }, { transaction });
        await ScanJobAttempt.create({ jobId: job.id, attempt, worker, tokenId, endedAt: null, outcome: null, message: null }, { transaction });
        const run = job.run!;
        if (!run.startedAt) starting.add(run.id);
        claimed.push({
          id: job.id,
          attempt,
          runId: run.id,
          collection: run.collection!.name,
          path: job.path,
          ...(job.pathBytes ? { pathBytes: job.pathBytes } : {}),
          absPath: absolutePath(run.root, job.path),
          sizeBytes: Number(job.sizeBytes),
          mtimeMs: job.mtimeMs,
          expiresAt: f.expiresAt.toISOString(),
          profile: { name: run.profileName, hash: run.profileHash, definition: run.profile } satisfies RunProfileDto,
        });
      }
    }
    for (const queueJobId of passedOver) await queue.release(queueJobId, transaction);
    if (claimed.length === 0) return [];
    // Only a run's first claims touch its row; the condition still guards against a concurrent first claim.
    if (starting.size) {
      await ctx.sequelize.query(`update scan_runs set started_at = now(), updated_at = now() where id = any($1::int[]) and started_at is null`, {
        bind: [[...starting]],
        type: QueryTypes.UPDATE,
        transaction,
      });
    }
    await recordAudit(actor, { action: "jobs.claim", targetType: "job", targetId: claimed.map((c) => c.id).join(","), details: { worker, jobs: claimed.map((c) => ({ id: c.id, attempt: c.attempt })) } }, transaction);
    return claimed;
  });
  return { jobs, heartbeatIntervalSeconds: heartbeatIntervalSeconds(queue.limits.heartbeatSeconds) };
}

/** A waiting claim's pause before it looks at the queue again; cut short when this server queues jobs. */
export function waitForQueuedJobs(ctx: AppContext, ms: number): Promise<void> {
  return jobQueueFor(ctx.sequelize).waitForJobs(ms);
}

/** Jobs claimed for a worker that hung up before the answer reached it: straight back, no retry spent. */
export async function releaseUndelivered(ctx: AppContext, jobs: ClaimedJobDto[]): Promise<void> {
  for (const claimed of jobs) {
    await ctx.sequelize.transaction(async (transaction) => {
      const job = await ScanJob.findByPk(claimed.id, { transaction, lock: transaction.LOCK.UPDATE });
      if (!job || job.state !== "active" || job.attempts !== claimed.attempt) return;
      await endAttempt(ctx.sequelize, job, { outcome: "released", message: null, worker: job.worker }, transaction);
    });
  }
}

/**
 * Only the token that claimed a job (or an admin) may change it: 403 otherwise, audited outside the
 * request's transaction so the refusal is kept. `attempt` narrows it to that attempt's token.
 */
export async function assertJobHolder(actor: Actor, jobId: number, action: string, attempt?: number): Promise<void> {
  if (isAdmin(actor)) return;
  const tokenId = actor.tokenId;
  const attempts = await ScanJobAttempt.findAll({ where: { jobId }, attributes: ["attempt", "tokenId"] });
  // A named attempt that exists must be this token's; an unknown one is left to the stale-attempt check.
  const named = attempt === undefined ? [] : attempts.filter((a) => a.attempt === attempt);
  const held = tokenId !== null && (named.length ? named : attempts).some((a) => a.tokenId === tokenId);
  if (held) return;
  if (!(await ScanJob.count({ where: { id: jobId } }))) throw notFound("job", jobId);
  await recordAudit(actor, { action: "job.forbidden", targetType: "job", targetId: jobId, details: { attempted: action, attempt: attempt ?? null, tokenId } });
  throw forbidden(`job ${jobId}${attempt !== undefined ? ` (attempt ${attempt})` : ""} was not claimed with this API token; only the worker holding it, or an admin, may ${action} it`, "not_job_holder");
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

/**
 * Ends an active job's attempt and decides where the job goes: back in its place in the queue, or
 * dead-lettered once `retryLimit + 1` attempts failed on the file itself, or that many distinct workers
 * could not reach it. Shared by a worker's fail and release, a lost heartbeat and a supervisor's requeue.
 */
export async function endAttempt(
  sequelize: AppContext["sequelize"],
  job: ScanJob,
  end: { outcome: "failed" | "expired" | "released" | "unreachable" | "requeued"; message: string | null; worker: string | null },
  transaction: Transaction,
): Promise<ScanJobState> {
  const queue = jobQueueFor(sequelize);
  const limit = queue.limits.retryLimit + 1;
  const failures = job.failures + (end.outcome === "failed" || end.outcome === "expired" ? 1 : 0);
  const unreachableBy = end.outcome === "unreachable" && end.worker && !job.unreachableBy.includes(end.worker) ? [...job.unreachableBy, end.worker] : job.unreachableBy;
  let state: ScanJobState = "queued";
  let lastError = end.message ?? job.lastError;
  if (failures >= limit) {
    // The last error stands as it came: a dead-lettered job's state already says its retries are spent.
    state = "failed";
  } else if (unreachableBy.length >= limit) {
    state = "failed";
    lastError = `${unreachableBy.length} workers could not reach the file (${unreachableBy.join(", ")}); is the storage mounted on them (tidemark worker --mount)?`;
  }
  let queueJobId = job.queueJobId;
  if (state === "failed") {
    await queue.deadLetter(queueJobId, { message: lastError, worker: end.worker, attempt: job.attempts }, transaction);
  } else if (!(await queue.release(queueJobId, transaction))) {
    // pg-boss gave up on it meanwhile (its own visibility timeout): the file goes back as a fresh queue job.
    queueJobId = orderedJobId();
    await queue.insert([{ queueJobId, data: { scanJobId: job.id, runId: job.runId, queueJobId } }], transaction);
  }
  await job.update({ state, failures, unreachableBy, lastError, queueJobId, expiresAt: null, heartbeatAt: null }, { transaction });
  await closeAttempts(job.id, end.outcome, end.message, transaction, job.attempts);
  if (state === "failed") await markRunFinishedIfDone(sequelize, job.runId, transaction);
  return state;
}

export async function failJob(ctx: AppContext, actor: Actor, jobId: number, input: { attempt: number; worker: string; message: string }): Promise<JobStateDto> {
  await assertJobHolder(actor, jobId, "fail", input.attempt);
  return ctx.sequelize.transaction(async (transaction) => {
    const job = await currentAttempt(jobId, input.attempt, transaction);
    const state = await endAttempt(ctx.sequelize, job, { outcome: "failed", message: input.message, worker: input.worker }, transaction);
    await recordAudit(actor, { action: "job.fail", targetType: "job", targetId: job.id, details: { worker: input.worker, attempt: input.attempt, message: input.message, state } }, transaction);
    return { jobId: job.id, state, attempts: job.attempts };
  });
}

/** `reason: "unreachable"`: the worker cannot reach the file; no retry is spent, and it is not offered that job again. */
export async function releaseJob(ctx: AppContext, actor: Actor, jobId: number, input: { attempt: number; worker: string; reason?: "stopping" | "unreachable"; message?: string }): Promise<JobStateDto> {
  await assertJobHolder(actor, jobId, "release", input.attempt);
  return ctx.sequelize.transaction(async (transaction) => {
    const job = await currentAttempt(jobId, input.attempt, transaction);
    const unreachable = input.reason === "unreachable";
    const message = unreachable ? `${input.worker} could not reach the file: ${input.message ?? "not found"}` : null;
    const state = await endAttempt(ctx.sequelize, job, { outcome: unreachable ? "unreachable" : "released", message, worker: input.worker }, transaction);
    await recordAudit(actor, { action: "job.release", targetType: "job", targetId: job.id, details: { worker: input.worker, attempt: input.attempt, reason: input.reason ?? "stopping", state } }, transaction);
    return { jobId: job.id, state, attempts: job.attempts };
  });
}

/** A worker's sign of life for the jobs it holds; answers which of them it still holds. */
export async function heartbeatJobs(ctx: AppContext, actor: Actor, jobs: { id: number; attempt: number }[]): Promise<{ held: number[]; lost: number[] }> {
  if (jobs.length === 0) return { held: [], lost: [] };
  const rows = await ctx.sequelize.query<{ id: number }>(
    `update scan_jobs j set heartbeat_at = now()
       from unnest($1::int[], $2::int[]) as w(id, attempt)
      where j.id = w.id and j.state = 'active' and j.attempts = w.attempt
        and ($3::boolean or exists (select 1 from scan_job_attempts a where a.job_id = j.id and a.attempt = w.attempt and a.token_id = $4::text))
      returning j.id`,
    { bind: [jobs.map((j) => j.id), jobs.map((j) => j.attempt), isAdmin(actor), actor.tokenId], type: QueryTypes.SELECT },
  );
  const held = new Set(rows.map((r) => r.id));
  return { held: [...held], lost: jobs.map((j) => j.id).filter((id) => !held.has(id)) };
}

/** A supervisor sends a job a worker holds back to the queue (a stuck or vanished worker); no retry is spent. */
export async function requeueJob(ctx: AppContext, actor: Actor, jobId: number): Promise<JobStateDto> {
  const who = actor.user;
  return ctx.sequelize.transaction(async (transaction) => {
    const job = await ScanJob.findByPk(jobId, { transaction, lock: transaction.LOCK.UPDATE });
    if (!job) throw notFound("job", jobId);
    if (job.state !== "active") throw conflict(`job ${jobId} is ${job.state}; only a job a worker holds can be sent back to the queue`, "not_active");
    const message = `attempt ${job.attempts} by ${job.worker ?? "a worker"} sent back to the queue by ${who?.name || who?.email || "a supervisor"}`;
    const state = await endAttempt(ctx.sequelize, job, { outcome: "requeued", message, worker: job.worker }, transaction);
    await recordAudit(actor, { action: "job.requeue", targetType: "job", targetId: job.id, details: { attempt: job.attempts, worker: job.worker } }, transaction);
    return { jobId: job.id, state, attempts: job.attempts };
  });
}

/** Dead-lettered jobs back into the queue as fresh pg-boss jobs (a full retry budget each). */
async function requeueFailed(ctx: AppContext, jobs: ScanJob[], transaction: Transaction): Promise<void> {
  const queue = jobQueueFor(ctx.sequelize);
  const sends: { queueJobId: string; data: ScanJobData }[] = [];
  for (const job of jobs) {
    const queueJobId = orderedJobId();
    await job.update({ queueJobId, state: "queued", expiresAt: null, heartbeatAt: null, failures: 0, unreachableBy: [] }, { transaction });
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

export async function retryJob(ctx: AppContext, actor: Actor, jobId: number): Promise<JobStateDto> {
  return ctx.sequelize.transaction(async (transaction) => {
    const job = await ScanJob.findByPk(jobId, { transaction, lock: transaction.LOCK.UPDATE });
    if (!job) throw notFound("job", jobId);
    if (job.state === "active") throw conflict(`job ${jobId} is held by ${job.worker ?? "a worker"}; send it back to the queue instead (Back to queue, POST /api/jobs/${jobId}/requeue)`, "not_failed");
    if (job.state !== "failed") throw conflict(`job ${jobId} is ${job.state}; only failed (dead-lettered) jobs can be retried`, "not_failed");
    await requeueFailed(ctx, [job], transaction);
    await recordAudit(actor, { action: "job.retry", targetType: "job", targetId: job.id, details: { runId: job.runId, path: job.path, attempts: job.attempts } }, transaction);
    return { jobId: job.id, state: "queued", attempts: job.attempts };
  });
}

export async function retryRun(ctx: AppContext, actor: Actor, runId: number): Promise<number> {
  return ctx.sequelize.transaction(async (transaction) => {
    const run = await ScanRun.findByPk(runId, { transaction, lock: transaction.LOCK.UPDATE });
    if (!run) throw notFound("run", runId);
    const jobs = await ScanJob.findAll({ where: { runId, state: "failed" }, transaction, lock: transaction.LOCK.UPDATE });
    await requeueFailed(ctx, jobs, transaction);
    await recordAudit(actor, { action: "run.retry", targetType: "run", targetId: runId, details: { retried: jobs.length, jobIds: jobs.map((j) => j.id) } }, transaction);
    return jobs.length;
  });
}
