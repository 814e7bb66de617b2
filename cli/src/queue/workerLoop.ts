/**
 * The worker's loop: `concurrency` lanes, each claiming one job at a time, measuring it, uploading the
 * result and only then counting it done (the server acknowledges the pg-boss job in the same transaction
 * that stores the result). Nothing is acknowledged that is not stored: a worker that dies mid-job simply
 * sends nothing, and pg-boss hands the job to another worker after the visibility timeout.
 *
 * Stopping: the first SIGTERM/SIGINT stops claiming and lets the jobs in hand finish (up to `graceMs`);
 * a second signal, or the grace running out, aborts them and releases each back to the queue at once.
 */
import type { ClaimedJobDto, ClaimJobsResultDto, JobResultDto } from "@tidemark/shared/types/api";
import { oneLine } from "../errors.ts";
import { WorkerCrashError, WorkerStartError } from "../scan/workerPool.ts";
import { ServerUnreachableError, UploadRejectedError, type ApiClient } from "./apiClient.ts";
import { localPath, type PathMount } from "./pathMounts.ts";
import type { ScanEngines } from "./scanEngines.ts";
import { FileMissingError, resultForm, scanJob } from "./scanJob.ts";

export interface WorkerLoopOptions {
  api: ApiClient;
  engines: ScanEngines;
  worker: string;
  concurrency: number;
  pollMs: number;
  mounts: PathMount[];
  exitWhenIdle: boolean;
  graceMs: number;
  log: (line: string) => void;
  /** Progress lines per job (off with --quiet). */
  verbose: boolean;
}

export interface WorkerSummary {
  done: number;
  failed: number;
  released: number;
}

export interface WorkerControl {
  /** First call: finish what is in hand; second call: abort and release it. */
  stop(): void;
  readonly finished: Promise<WorkerSummary>;
}

/** Longest wait between claims while the server is unreachable. */
const MAX_BACKOFF_MS = 30_000;

export function startWorkerLoop(o: WorkerLoopOptions): WorkerControl {
  const summary: WorkerSummary = { done: 0, failed: 0, released: 0 };
  let stopping = false;
  let aborting = false;
  /** Lanes waiting between claims; a stop wakes them. */
  const sleepers = new Set<() => void>();
  let graceTimer: NodeJS.Timeout | null = null;
  let fatal: Error | null = null;

  const abortNow = (): void => {
    if (aborting) return;
    aborting = true;
    void o.engines.terminate();
  };
  const sleep = (ms: number): Promise<void> =>
    new Promise((resolve) => {
      const timer = setTimeout(done, ms);
      function done(): void {
        clearTimeout(timer);
        sleepers.delete(done);
        resolve();
      }
      sleepers.add(done);
    });

  const report = async (job: ClaimedJobDto, action: "fail" | "release", message?: string): Promise<void> => {
    try {
      await o.api.postJson(`/api/jobs/${job.id}/${action}`, action === "fail" ? { attempt: job.attempt, worker: o.worker, message } : { attempt: job.attempt, worker: o.worker });
      if (action === "fail") summary.failed += 1;
      else summary.released += 1;
    } catch (error) {
      // The visibility timeout will bring the job back anyway.
      o.log(`job ${job.id}: could not ${action} it (${oneLine(error)}); it returns to the queue when it expires`);
    }
  };

  /** Uploads until stored, refused, or the job has expired (another worker has it by then). */
  const upload = async (job: ClaimedJobDto, form: () => FormData): Promise<JobResultDto | null> => {
    for (;;) {
      try {
        return (await o.api.postForm<JobResultDto>(`/api/jobs/${job.id}/result`, form)).body;
      } catch (error) {
        if (!(error instanceof ServerUnreachableError) || Date.now() > Date.parse(job.expiresAt)) throw error;
        o.log(`job ${job.id}: ${error.message}; trying again`);
        await sleep(2_000);
      }
    }
  };

  const process = async (job: ClaimedJobDto): Promise<void> => {
    const started = performance.now();
    let outcome;
    try {
      const engine = o.engines.forProfile(job.profile);
      outcome = await scanJob(job, localPath(job.absPath, o.mounts), engine);
    } catch (error) {
      if (aborting) return void (await report(job, "release"));
      if (error instanceof WorkerStartError) {
        fatal = error;
        await report(job, "release");
        stopping = true;
        return;
      }
      const why = error instanceof FileMissingError || error instanceof WorkerCrashError ? error.message : `measurement failed: ${oneLine(error)}`;
      o.log(`job ${job.id} ${job.path}: ${why}`);
      return void (await report(job, "fail", `${o.worker}: ${why}`));
    }
    try {
      if (outcome.imageError) o.log(`warning: ${outcome.imageError}`);
      const stored = await upload(job, () => resultForm(job, o.worker, outcome));
      summary.done += 1;
      if (o.verbose) {
        const seconds = (performance.now() - started) / 1000;
        const verdict = outcome.report.files[0].verdict;
        o.log(`${stored?.created === false ? "already stored" : "done"}: ${job.path} (${verdict}, ${outcome.audioSeconds.toFixed(1)} s of audio in ${seconds.toFixed(1)} s)`);
      }
    } catch (error) {
      if (error instanceof UploadRejectedError && (error.status === 404 || error.status === 409)) {
        o.log(`job ${job.id}: the server no longer wants this result (${error.message})`);
      } else if (error instanceof UploadRejectedError) {
        o.log(`job ${job.id} ${job.path}: result refused (${error.message})`);
        await report(job, "fail", `${o.worker}: the server refused the result: ${error.message}`);
      } else {
        o.log(`job ${job.id} ${job.path}: result not delivered (${oneLine(error)}); the job returns to the queue when it expires`);
      }
    } finally {
      await outcome.cleanUp().catch(() => undefined);
    }
  };

  const lane = async (): Promise<void> => {
    let backoffMs = o.pollMs;
    while (!stopping) {
      let jobs: ClaimedJobDto[];
      try {
        jobs = (await o.api.postJson<ClaimJobsResultDto>("/api/jobs/claim", { worker: o.worker, max: 1 })).body.jobs;
        backoffMs = o.pollMs;
      } catch (error) {
        if (error instanceof UploadRejectedError) {
          fatal = new Error(`the server refused to hand out jobs: ${error.message}`);
          stopping = true;
          return;
        }
        o.log(`claiming: ${oneLine(error)}; trying again in ${(backoffMs / 1000).toFixed(0)} s`);
        await sleep(backoffMs);
        backoffMs = Math.min(MAX_BACKOFF_MS, backoffMs * 2);
        continue;
      }
      if (jobs.length === 0) {
        if (o.exitWhenIdle) return;
        await sleep(o.pollMs);
        continue;
      }
      // Claimed while a stop was asked for: hand it straight back.
      for (const job of jobs) {
        if (stopping) await report(job, "release");
        else await process(job);
      }
    }
  };

  const finished = Promise.all(Array.from({ length: o.concurrency }, lane)).then(async () => {
    if (graceTimer) clearTimeout(graceTimer);
    await o.engines.close().catch(() => undefined);
    if (fatal) throw fatal;
    return summary;
  });

  return {
    stop() {
      if (!stopping) {
        stopping = true;
        for (const wake of [...sleepers]) wake();
        graceTimer = setTimeout(() => {
          o.log(`still busy after ${Math.round(o.graceMs / 1000)} s: releasing the jobs in hand`);
          abortNow();
        }, o.graceMs);
        graceTimer.unref();
        return;
      }
      abortNow();
    },
    finished,
  };
}
