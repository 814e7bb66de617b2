/**
 * `--workers 1` runs the scan tasks on the main thread instead of one worker thread: the same code and
 * results, without a second V8 isolate and tsx loader (about 25 MB less peak RSS, and no worker start-up).
 * The event loop still turns between the reader's 1 MiB reads, so Ctrl-C and progress stay responsive.
 */
import type { ScanContext } from "./analyseFile.ts";
import type { ScanTask, ScanTaskResult } from "./scanTask.ts";
import { WorkerCrashError, type WorkerPool } from "./workerPool.ts";

export function createInlineRunner(context: ScanContext): WorkerPool<ScanTask, ScanTaskResult> {
  let closed = false;
  // The second Ctrl-C stops the file being read, as terminating a worker would.
  const stop = new AbortController();
  // Loaded on first use, so commands that never measure do not pay for the analysers.
  let runner: Promise<typeof import("./scanTask.ts")> | null = null;
  return {
    size: 1,
    async run(task, onProgress) {
      if (closed) throw new WorkerCrashError("runner stopped");
      runner ??= import("./scanTask.ts");
      return (await runner).runScanTask(task, context, stop.signal, onProgress);
    },
    async close() {
      closed = true;
    },
    async terminate() {
      closed = true;
      stop.abort();
    },
  };
}
