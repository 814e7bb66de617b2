/**
 * Worker-thread entry of the scan pool: runs the scan tasks the main thread posts, one at a time in the
 * order they came (small files are sent ahead, to wait here behind the running one).
 */
import { parentPort, workerData } from "node:worker_threads";
import { oneLine } from "../errors.ts";
import type { ScanContext } from "./analyseFile.ts";
import { runScanTask, type ScanTask, type ScanTaskResult } from "./scanTask.ts";
import type { WorkerReply } from "./workerPool.ts";

const context = workerData as ScanContext;

async function run(message: { id: number; task: ScanTask }): Promise<void> {
  const onProgress = (bytesRead: number): void => parentPort?.postMessage({ id: message.id, progress: bytesRead } satisfies WorkerReply<ScanTaskResult>);
  try {
    const result = await runScanTask(message.task, context, undefined, onProgress);
    parentPort?.postMessage({ id: message.id, ok: true, result } satisfies WorkerReply<ScanTaskResult>);
  } catch (error) {
    parentPort?.postMessage({ id: message.id, ok: false, message: oneLine(error) } satisfies WorkerReply<ScanTaskResult>);
  }
}

let running: Promise<void> = Promise.resolve();
parentPort?.on("message", (message: { id: number; task: ScanTask }) => {
  running = running.then(() => run(message));
});
