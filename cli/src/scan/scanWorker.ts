/** Worker-thread entry of the scan pool: measures files (or only hashes them, for --resume checks). */
import { parentPort, workerData } from "node:worker_threads";
import { oneLine } from "../errors.ts";
import { sha256OfFile } from "../fixity/hashFile.ts";
import { analyseFile, type AnalyseTask, type AnalysedFile, type ScanContext } from "./analyseFile.ts";
import type { WorkerReply } from "./workerPool.ts";

export type ScanTask = ({ kind: "analyse" } & AnalyseTask) | { kind: "hash"; absPath: string };
export type ScanTaskResult = { kind: "analysed"; file: AnalysedFile } | { kind: "hashed"; sha256: string | null };

const context = workerData as ScanContext;

async function runTask(task: ScanTask): Promise<ScanTaskResult> {
  if (task.kind === "hash") {
    // A file that cannot be hashed now is simply measured again.
    return { kind: "hashed", sha256: await sha256OfFile(task.absPath).catch(() => null) };
  }
  return { kind: "analysed", file: await analyseFile(task, context) };
}

parentPort?.on("message", (message: { id: number; task: ScanTask }) => {
  runTask(message.task).then(
    (result) => parentPort?.postMessage({ id: message.id, ok: true, result } satisfies WorkerReply<ScanTaskResult>),
    (error: unknown) => parentPort?.postMessage({ id: message.id, ok: false, message: oneLine(error) } satisfies WorkerReply<ScanTaskResult>),
  );
});
