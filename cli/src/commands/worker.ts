/**
 * `tidemark worker`: takes jobs from the server's queue, measures each file with the engine `scan` uses,
 * and sends each result. A worker needs only the server URL, an API token (TIDEMARK_TOKEN or the stored
 * login) and the shared storage at the path the files were enqueued from (or --mount). It runs until
 * SIGTERM/SIGINT (or, with --exit-when-idle, until the queue is empty).
 *
 * Exit codes: 0 stopped with every job finished or handed back; 5 the server refused the token; 6 the
 * server could not be reached (or is not a Tidemark server); 7 stopped while the server was unreachable,
 * with jobs left to the server's heartbeat limit; 1 anything else.
 */
import { hostname } from "node:os";
import { createApiClient, retryPolicyFrom } from "../api/apiClient.ts";
import { resolveCredentials } from "../config/storedLogin.ts";
import { EXIT_CODES, ExitError } from "../errors.ts";
import type { CliIo } from "../io.ts";
import type { ProgressMode } from "../options.ts";
import { createScanProgress, progressDisplay } from "../scan/progress.ts";
import type { PathMount } from "../queue/pathMounts.ts";
import { createScanEngines } from "../queue/scanEngines.ts";
import { startWorkerLoop, type WorkerStopError, type WorkerSummary } from "../queue/workerLoop.ts";

export interface WorkerOptions {
  server: string | null;
  concurrency: number;
  /** Shown in the portal beside the jobs it holds; default host#pid. */
  name: string | null;
  pollSeconds: number;
  graceSeconds: number;
  /** How long the server may stay unreachable, once it has answered, before the worker gives up. */
  offlineSeconds: number;
  mounts: PathMount[];
  images: boolean;
  exitWhenIdle: boolean;
  quiet: boolean;
  /** auto: a live line on a terminal (bytes of each job in hand, ETA); json: JSON lines on stderr. */
  progress: ProgressMode;
}

const STOP_EXIT: Record<WorkerStopError["kind"], number> = {
  auth: EXIT_CODES.auth,
  unreachable: EXIT_CODES.unreachable,
  refused: EXIT_CODES.usage,
  start: EXIT_CODES.failed,
};

function counts(s: WorkerSummary): string {
  return `${s.done} done, ${s.failed} failed, ${s.released} released${s.left ? `, ${s.left} left to the heartbeat limit` : ""}`;
}

export async function workerCommand(options: WorkerOptions, io: CliIo): Promise<number> {
  // Counts grow as jobs are claimed: the ETA is for the jobs in hand. Lines go above the live display.
  const progress = createScanProgress({ total: 0, totalBytes: 0, alreadyDone: 0, stream: io.stderr as NodeJS.WritableStream, display: progressDisplay(options.quiet, options.progress) });
  const log = (line: string): void => progress.note(`tidemark: ${line}`);
  const { server, token } = await resolveCredentials(options.server, io.env);
  const worker = options.name ?? `${hostname()}#${process.pid}`;
  const policy = retryPolicyFrom(io.env);
  const api = createApiClient(server, token, policy);
  const engines = await createScanEngines({ concurrency: options.concurrency, images: options.images });
  const loop = startWorkerLoop({
    api,
    engines,
    worker,
    concurrency: options.concurrency,
    pollMs: options.pollSeconds * 1000,
    mounts: options.mounts,
    exitWhenIdle: options.exitWhenIdle,
    graceMs: options.graceSeconds * 1000,
    firstContactMs: policy.totalMs,
    offlineLimitMs: options.offlineSeconds * 1000,
    log,
    verbose: !options.quiet,
    progress,
  });
  let signals = 0;
  const onSignal = (signal: NodeJS.Signals): void => {
    signals += 1;
    log(signals === 1 ? `${signal}: no new jobs; finishing the ones in hand (${signal} again releases them now)` : `${signal}: releasing the jobs in hand`);
    loop.stop();
  };
  process.on("SIGINT", onSignal);
  process.on("SIGTERM", onSignal);
  if (!options.quiet) log(`worker ${worker} taking jobs from ${server} (${options.concurrency} at a time)`);
  try {
    const { summary, stoppedBy } = await loop.finished;
    if (stoppedBy) throw new ExitError(STOP_EXIT[stoppedBy.kind], `worker ${worker} stopped: ${stoppedBy.message} (${counts(summary)})`);
    if (summary.left > 0) {
      throw new ExitError(EXIT_CODES.jobsLeft, `worker ${worker} stopped: ${counts(summary)}; the server could not be reached to hand ${summary.left} job(s) back, so they return to the queue after its heartbeat limit`);
    }
    log(`worker ${worker} stopped: ${counts(summary)}`);
    return EXIT_CODES.ok;
  } finally {
    progress.stop();
    process.off("SIGINT", onSignal);
    process.off("SIGTERM", onSignal);
  }
}
