/** Worker-thread entry of the scan pool: runs one scan task at a time for the main thread. */
import { parentPort, workerData } from "node:worker_threads";
import { oneLine } from "../errors.ts";
import type { ScanContext } from "./analyseFile.ts";
import { runScanTask, type ScanTask, type ScanTaskResult } from "./scanTask.ts";
import type { WorkerReply } from "./workerPool.ts";

const context = workerData as ScanContext;

parentPort?.on("message", (message: { id: number; task: ScanTask }) => {
  const onProgress = (bytesRead: number): void => parentPort?.postMessage({ id: message.id, progress: bytesRead } satisfies WorkerReply<ScanTaskResult>);
  runScanTask(message.task, context, undefined, onProgress).then(
    (result) => parentPort?.postMessage({ id: message.id, ok: true, result } satisfies WorkerReply<ScanTaskResult>),
    (error: unknown) => parentPort?.postMessage({ id: message.id, ok: false, message: oneLine(error) } satisfies WorkerReply<ScanTaskResult>),
  );
});
