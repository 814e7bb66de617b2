/**
 * Brings our job rows in line with what pg-boss decided on its own: an active job whose worker went
 * silent past the visibility timeout is retried by pg-boss (or dead-lettered once its retries are spent),
 * and the row follows, with the attempt closed as expired. Runs after pg-boss's maintenance and for
 * every dead-letter copy, so the portal's counts do not wait for the next claim.
 */
import { Op, type Sequelize, type Transaction } from "sequelize";
import { AuditEntry } from "../models/index.ts";
import { closeAttempts, endAttempt } from "../services/runsJobs.ts";
import { markRunFinishedIfDone } from "../services/runsStatus.ts";
import { jobQueueFor, type ScanJobData } from "./jobQueue.ts";
import { ScanJob } from "../models/index.ts";

/** Rows looked at per pass; the next maintenance takes the rest. */
const BATCH = 500;

async function systemAudit(action: string, job: ScanJob, details: Record<string, unknown>, transaction: Transaction): Promise<void> {
  await AuditEntry.create({ actorId: null, action, targetType: "job", targetId: String(job.id), requestId: null, details }, { transaction });
}

async function markFailed(sequelize: Sequelize, job: ScanJob, message: string, transaction: Transaction): Promise<void> {
  await job.update({ state: "failed", lastError: message, expiresAt: null }, { transaction });
  await closeAttempts(job.id, "expired", message, transaction);
  await markRunFinishedIfDone(sequelize, job.runId, transaction);
}

export async function reconcileExpiredJobs(sequelize: Sequelize, now = new Date()): Promise<{ requeued: number; failed: number }> {
  const queue = jobQueueFor(sequelize);
  const stale = await ScanJob.findAll({ where: { state: "active", expiresAt: { [Op.lt]: now } }, attributes: ["id"], order: [["expiresAt", "ASC"]], limit: BATCH });
  const outcome = { requeued: 0, failed: 0 };
  for (const { id } of stale) {
    await sequelize.transaction(async (transaction) => {
      const job = await ScanJob.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE });
      if (!job || job.state !== "active" || !job.expiresAt || job.expiresAt >= now) return;
      const state = await queue.state(job.queueJobId, transaction);
      const message = `attempt ${job.attempts} by ${job.worker ?? "a worker"} sent no result within the visibility timeout`;
      if (state === "created" || state === "retry") {
        await job.update({ state: "queued", lastError: message, expiresAt: null }, { transaction });
        await closeAttempts(job.id, "expired", message, transaction);
        await systemAudit("job.expire", job, { attempt: job.attempts, worker: job.worker, state: "queued" }, transaction);
        outcome.requeued += 1;
      } else if (state === "failed") {
        await markFailed(sequelize, job, `${message}; retries spent`, transaction);
        await systemAudit("job.expire", job, { attempt: job.attempts, worker: job.worker, state: "failed" }, transaction);
        outcome.failed += 1;
      }
      // Still active in pg-boss: its maintenance has not expired it yet; the next pass will see it.
    });
  }
  return outcome;
}

/**
 * Jobs whose worker has been silent past the heartbeat limit (killed, frozen, or cut off): each goes back
 * to its place in the queue at once, counted as a failed attempt (a file that kills its worker every time
 * is dead-lettered, not retried for ever). The run page shows why in the job's last error.
 */
export async function requeueSilentJobs(sequelize: Sequelize, heartbeatSeconds: number, now = new Date()): Promise<{ requeued: number; failed: number }> {
  const cutoff = new Date(now.getTime() - heartbeatSeconds * 1000);
  const stale = await ScanJob.findAll({ where: { state: "active", heartbeatAt: { [Op.lt]: cutoff } }, attributes: ["id"], order: [["heartbeatAt", "ASC"]], limit: BATCH });
  const outcome = { requeued: 0, failed: 0 };
  for (const { id } of stale) {
    await sequelize.transaction(async (transaction) => {
      const job = await ScanJob.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE });
      if (!job || job.state !== "active" || !job.heartbeatAt || job.heartbeatAt >= cutoff) return;
      const silent = Math.round((now.getTime() - job.heartbeatAt.getTime()) / 1000);
      const message = `attempt ${job.attempts} by ${job.worker ?? "a worker"}: no heartbeat for ${silent} s (limit ${heartbeatSeconds} s); the worker stopped or lost the server`;
      const state = await endAttempt(sequelize, job, { outcome: "expired", message, worker: job.worker }, transaction);
      await systemAudit("job.heartbeat_lost", job, { attempt: job.attempts, worker: job.worker, silentSeconds: silent, state }, transaction);
      if (state === "failed") outcome.failed += 1;
      else outcome.requeued += 1;
    });
  }
  return outcome;
}

/** After a server restart every worker gets a full heartbeat limit to reach it again before its jobs are taken back. */
export async function resetHeartbeats(sequelize: Sequelize): Promise<void> {
  await sequelize.query(`update scan_jobs set heartbeat_at = now() where state = 'active'`);
}

/** A dead-letter copy: the job it came from spent its retries. */
export async function markDeadLettered(sequelize: Sequelize, data: ScanJobData, output: unknown): Promise<boolean> {
  return sequelize.transaction(async (transaction) => {
    const job = await ScanJob.findByPk(data.scanJobId, { transaction, lock: transaction.LOCK.UPDATE });
    // Only the pg-boss job the copy came from counts: a retried job has a new one.
    if (!job || job.queueJobId !== data.queueJobId || (job.state !== "queued" && job.state !== "active")) return false;
    // pg-boss writes a timeout as { value: { message } }; a worker's failure arrives as { message }.
    const out = output as { message?: unknown; value?: { message?: unknown } } | null;
    const reason = typeof out?.message === "string" ? out.message : typeof out?.value?.message === "string" ? out.value.message : "dead-lettered";
    const message = `attempt ${job.attempts} by ${job.worker ?? "a worker"} ended without a result (${reason}); retries spent`;
    await markFailed(sequelize, job, message, transaction);
    await systemAudit("job.dead_letter", job, { attempts: job.attempts, message }, transaction);
    return true;
  });
}
