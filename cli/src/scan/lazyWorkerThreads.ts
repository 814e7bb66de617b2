/**
 * node:worker_threads, loaded when the first thread starts: a scan that measures in its own thread (one file,
 * `--workers 1`) never loads it (≈ 2 ms of a one-file scan's start-up, issue #22). The bundle is CommonJS, so
 * this is a plain require there.
 */
import { createRequire } from "node:module";

export type WorkerThreads = typeof import("node:worker_threads");

let loaded: WorkerThreads | null = null;

export function workerThreads(): WorkerThreads {
  return (loaded ??= createRequire(import.meta.url)("node:worker_threads") as WorkerThreads);
}
