/**
 * `tidemark worker`: takes jobs from the server's queue, measures each file with the engine `scan` uses,
 * and sends each result. A worker needs only the server URL, an API token (TIDEMARK_TOKEN or the stored
 * login) and the shared storage at the path the files were enqueued from (or --mount). It runs until
 * SIGTERM/SIGINT (or, with --exit-when-idle, until the queue is empty) and then exits 0.
 */
import { hostname } from "node:os";
import { resolveCredentials } from "../config/storedLogin.ts";
import { EXIT_CODES, ExitError } from "../errors.ts";
import type { CliIo } from "../io.ts";
import { createApiClient } from "../queue/apiClient.ts";
import type { PathMount } from "../queue/pathMounts.ts";
import { createScanEngines } from "../queue/scanEngines.ts";
import { startWorkerLoop } from "../queue/workerLoop.ts";
import { retryPolicyFrom } from "../upload/ingestClient.ts";

export interface WorkerOptions {
  server: string | null;
  concurrency: number;
  /** Shown in the portal beside the jobs it holds; default host#pid. */
  name: string | null;
  pollSeconds: number;
  graceSeconds: number;
  mounts: PathMount[];
  images: boolean;
  exitWhenIdle: boolean;
  quiet: boolean;
}

export async function workerCommand(options: WorkerOptions, io: CliIo): Promise<number> {
  const log = (line: string): void => void io.stderr.write(`tidemark: ${line}\n`);
  const { server, token } = await resolveCredentials(options.server, io.env);
  const worker = options.name ?? `${hostname()}#${process.pid}`;
  const api = createApiClient(server, token, retryPolicyFrom(io.env));
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
    log,
    verbose: !options.quiet,
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
    const summary = await loop.finished;
    log(`worker ${worker} stopped: ${summary.done} done, ${summary.failed} failed, ${summary.released} released`);
    return EXIT_CODES.ok;
  } catch (error) {
    throw new ExitError(EXIT_CODES.failed, `worker ${worker} stopped: ${(error as Error).message}`);
  } finally {
    process.off("SIGINT", onSignal);
    process.off("SIGTERM", onSignal);
  }
}
