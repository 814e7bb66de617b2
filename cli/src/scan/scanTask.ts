/** The two jobs a scan hands out per file: measure it, or (for --resume checks) only hash it. */
import { sha256OfFile } from "../fixity/hashFile.ts";
import { analyseFile, type AnalyseTask, type AnalysedFile, type ScanContext } from "./analyseFile.ts";
import { revivePath, type FsPath } from "./rawPath.ts";

export type ScanTask = ({ kind: "analyse" } & AnalyseTask) | { kind: "hash"; absPath: FsPath };
export type ScanTaskResult = { kind: "analysed"; file: AnalysedFile } | { kind: "hashed"; sha256: string | null };

export async function runScanTask(
  task: ScanTask,
  context: ScanContext,
  signal?: AbortSignal,
  onProgress?: (bytesRead: number) => void,
): Promise<ScanTaskResult> {
  if (task.kind === "hash") {
    // A file that cannot be hashed now is simply measured again.
    return { kind: "hashed", sha256: await sha256OfFile(revivePath(task.absPath)).catch(() => null) };
  }
  return { kind: "analysed", file: await analyseFile({ ...task, absPath: revivePath(task.absPath) }, context, signal, onProgress) };
}
