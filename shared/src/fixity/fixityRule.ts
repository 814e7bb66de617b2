/**
 * The fixity rule applied when a file result is stored (a batch upload or a worker's job result): a
 * SHA-256 that differs from the latest earlier scan of the same path with a known SHA-256 adds a
 * `fixity-changed` fail finding, and a pass or warn verdict becomes fail (an error stays an error).
 * Pure: the caller looks the earlier scan up.
 */
import type { Finding, Verdict } from "../types/report.ts";

/** The latest earlier scan of the same path (in the same collection) that recorded a SHA-256. */
export interface EarlierHashedScan {
  fileResultId: number;
  batchId: number;
  sha256: string | null;
}

export interface FixityJudgement {
  /** The file's findings, with the `fixity-changed` one appended when the SHA-256 changed. */
  findings: Finding[];
  verdict: Verdict;
  /** The earlier scan whose SHA-256 differs, or null when nothing changed (or nothing can be compared). */
  changedFrom: EarlierHashedScan | null;
}

/** A changed file fails, unless it already failed or could not be read. */
export function verdictAfterFixityChange(verdict: Verdict): Verdict {
  return verdict === "pass" || verdict === "warn" ? "fail" : verdict;
}

export function judgeFixity(
  file: { sha256: string | null; findings: readonly Finding[]; verdict: Verdict },
  earlier: EarlierHashedScan | null | undefined,
): FixityJudgement {
  if (!earlier?.sha256 || !file.sha256 || earlier.sha256 === file.sha256) {
    return { findings: [...file.findings], verdict: file.verdict, changedFrom: null };
  }
  const finding: Finding = {
    code: "fixity-changed",
    severity: "fail",
    channel: null,
    startSeconds: null,
    endSeconds: null,
    message: `SHA-256 differs from the scan in batch ${earlier.batchId} (file result ${earlier.fileResultId}): was ${earlier.sha256}, now ${file.sha256}`,
  };
  return { findings: [...file.findings, finding], verdict: verdictAfterFixityChange(file.verdict), changedFrom: earlier };
}
