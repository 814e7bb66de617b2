/**
 * Worker-thread entry of the scan pool: runs the scan tasks the main thread posts, in the order they came.
 * Two small files run at once, interleaved on this thread: while one waits for its reads the other
 * computes (a folder of 1 s files went ≈ 20 % faster, wall and CPU); any other task runs alone.
 */
import { parentPort, workerData } from "node:worker_threads";
import { oneLine } from "../errors.ts";
import type { ScanContext } from "./analyseFile.ts";
import { runScanTask, type ScanTask, type ScanTaskResult } from "./scanTask.ts";
import type { WorkerReply, WorkerRequest } from "./workerPool.ts";

const context = workerData as ScanContext;
const SMALL_AT_ONCE = 2;

async function run(message: WorkerRequest<ScanTask>): Promise<void> {
  // A read that reaches the crawled size says nothing the result, just behind it, does not (issue #22: a
  // message less each short file, which is read in one go).
  const sizeBytes = message.task.kind === "analyse" ? message.task.sizeBytes : Infinity;
  const onProgress = (bytesRead: number): void => {
    if (bytesRead < sizeBytes) parentPort?.postMessage({ id: message.id, progress: bytesRead } satisfies WorkerReply<ScanTaskResult>);
  };
  try {
    const result = await runScanTask(message.task, context, undefined, onProgress);
    parentPort?.postMessage({ id: message.id, ok: true, result } satisfies WorkerReply<ScanTaskResult>);
  } catch (error) {
    parentPort?.postMessage({ id: message.id, ok: false, message: oneLine(error) } satisfies WorkerReply<ScanTaskResult>);
  }
}

const waiting: WorkerRequest<ScanTask>[] = [];
const running = new Set<WorkerRequest<ScanTask>>();

function startNext(): void {
  while (waiting.length > 0) {
    const next = waiting[0];
    const fits = running.size === 0 || (running.size < SMALL_AT_ONCE && next.small && [...running].every((r) => r.small));
    if (!fits) return;
    waiting.shift();
    running.add(next);
    void run(next).finally(() => {
      running.delete(next);
      startNext();
    });
  }
}

parentPort?.on("message", (message: WorkerRequest<ScanTask>) => {
  waiting.push(message);
  startNext();
});
