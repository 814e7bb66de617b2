/**
 * One file's result from a worker, appended to its run's batch and acknowledged in the same transaction:
 * the file row, its findings (stored by fileResultStore.ts, as an uploaded batch's are), the batch's
 * counts, the job row and the pg-boss job's completion commit together. Idempotent per job: a result that arrives again (a retried attempt, or a worker that died
 * between the commit and reading the answer) finds the job done and stores nothing new.
 */
import { QueryTypes, type Transaction } from "sequelize";
import type { JobResultDto } from "@tidemark/shared/types/api";
import type { ScanReport } from "@tidemark/shared/types/report";
import type { AppContext } from "../context.ts";
import { notFound, unprocessable } from "../errors.ts";
import { Collection, ScanJob, ScanRun } from "../models/index.ts";
import { jobQueueFor } from "../queue/jobQueue.ts";
import type { Actor } from "./actor.ts";
import type { WrittenArtefacts } from "./artefacts.ts";
import { recordAudit } from "./audit.ts";
import { lockCollection, storeFileResults, withArtefacts } from "./fileResultStore.ts";
import type { ArtefactPart } from "./ingestValidation.ts";
import { notifyFailingBatch } from "./notifications.ts";
import { markRunFinishedIfDone } from "./runsStatus.ts";

export interface JobResultInput {
  report: ScanReport;
  artefacts: ArtefactPart[];
  worker: string;
  attempt: number;
}

/** The delivering attempt is done, even if it had been given up as expired; any other open one is superseded. */
async function recordDelivery(jobId: number, attempt: number, transaction: Transaction, sequelize: AppContext["sequelize"]): Promise<void> {
  // One statement for both: the delivering attempt, and every other attempt still open.
  await sequelize.query(
    `update scan_job_attempts
        set ended_at = $4,
            outcome = case when attempt = $2 then 'done' else 'superseded' end,
            message = case when attempt = $2 then null else $3 end
      where job_id = $1 and (attempt = $2 or ended_at is null)`,
    { bind: [jobId, attempt, `attempt ${attempt} delivered the result`, new Date()], type: QueryTypes.UPDATE, transaction },
  );
}

type Stored = { dto: JobResultDto; finishedRun: boolean };

async function storeResult(ctx: AppContext, actor: Actor, jobId: number, input: JobResultInput, keys: WrittenArtefacts, transaction: Transaction): Promise<Stored> {
  const job = await ScanJob.findByPk(jobId, { transaction, lock: transaction.LOCK.UPDATE });
  if (!job) throw notFound("job", jobId);
  const run = await ScanRun.findByPk(job.runId, { include: [{ model: Collection, as: "collection" }], transaction });
  if (!run) throw notFound("run", job.runId);
  if (job.fileResultId !== null) {
    return { dto: { jobId, runId: run.id, batchId: run.batchId, fileResultId: job.fileResultId, created: false }, finishedRun: false };
  }
  const file = input.report.files[0];
  await lockCollection(ctx, run.collection!.name, transaction);
  const stored = await storeFileResults(ctx, actor, { collectionId: run.collectionId, files: [file], keys, batchFor: async () => run.batchId }, transaction);
  const [fileResultId] = stored.ids;
  const [verdict] = stored.verdicts;
  // The batch grows by one file; finished_at follows the latest result so the Batches view reads right.
  await ctx.sequelize.query(
    `update batches set file_count = file_count + 1,
            pass_count = pass_count + $2, warn_count = warn_count + $3, fail_count = fail_count + $4, error_count = error_count + $5,
            tool_name = $6, tool_version = $7, finished_at = greatest(finished_at, now()), updated_at = now(),
            profile_limits = coalesce($8::jsonb, profile_limits)
      where id = $1`,
    {
      bind: [
        run.batchId,
        +(verdict === "pass"),
        +(verdict === "warn"),
        +(verdict === "fail"),
        +(verdict === "error"),
        input.report.tool.name,
        input.report.tool.version,
        input.report.profile.limits ? JSON.stringify(input.report.profile.limits) : null,
      ],
      type: QueryTypes.UPDATE,
      transaction,
    },
  );
  await job.update({ state: "done", fileResultId, doneAt: new Date(), expiresAt: null, worker: input.worker, lastError: null }, { transaction });
  await recordDelivery(job.id, input.attempt, transaction, ctx.sequelize);
  // Whoever holds the job now (this attempt or a later one) is done with it: nothing will scan it again.
  await jobQueueFor(ctx.sequelize).finish(job.queueJobId, { fileResultId }, transaction);
  await recordAudit(
    actor,
    { action: "job.result", targetType: "job", targetId: job.id, details: { runId: run.id, batchId: run.batchId, fileResultId, path: file.path, verdict, worker: input.worker, attempt: input.attempt } },
    transaction,
  );
  const finishedRun = await markRunFinishedIfDone(ctx.sequelize, run.id, transaction);
  return { dto: { jobId, runId: run.id, batchId: run.batchId, fileResultId, created: true }, finishedRun };
}

/** After a run's last job: one e-mail to supervisors when its batch has failing or unreadable files. */
async function notifyIfFailing(ctx: AppContext, runId: number, batchId: number): Promise<void> {
  const claimed = await ctx.sequelize.query<{ id: number }>(
    `update scan_runs r set notified_at = now() from batches b
      where r.id = $1 and b.id = r.batch_id and r.notified_at is null and b.fail_count + b.error_count > 0
      returning r.id`,
    { bind: [runId], type: QueryTypes.SELECT },
  );
  if (claimed.length) await notifyFailingBatch(ctx, batchId);
}

export async function storeJobResult(ctx: AppContext, actor: Actor, jobId: number, input: JobResultInput): Promise<JobResultDto> {
  const job = await ScanJob.findByPk(jobId);
  if (!job) throw notFound("job", jobId);
  if (input.report.files.length !== 1) throw unprocessable(`a job result carries exactly one file, got ${input.report.files.length}`);
  const file = input.report.files[0];
  if (file.path !== job.path) throw unprocessable(`the result is for "${file.path}" but job ${jobId} scans "${job.path}"`, "wrong_file");
  // Look-alike names (not UTF-8) show the same path: the bytes must be this job's too.
  if ((file.pathBytes ?? null) !== (job.pathBytes ?? null)) {
    throw unprocessable(`the result is for "${file.path}" with pathBytes ${file.pathBytes ?? "none"} but job ${jobId} has ${job.pathBytes ?? "none"}`, "wrong_file");
  }
  if (job.fileResultId !== null) {
    const run = await ScanRun.findByPk(job.runId);
    return { jobId, runId: job.runId, batchId: run!.batchId, fileResultId: job.fileResultId, created: false };
  }

  const stored = await withArtefacts(ctx, input.artefacts, (keys, transaction) => storeResult(ctx, actor, jobId, input, keys, transaction), (s) => s.dto.created);
  if (!stored.dto.created) return stored.dto;
  if (stored.finishedRun) {
    await notifyIfFailing(ctx, stored.dto.runId, stored.dto.batchId).catch((e: unknown) => ctx.logger.error(`failing-run e-mail for run ${stored.dto.runId}: ${String(e)}`));
  }
  return stored.dto;
}
