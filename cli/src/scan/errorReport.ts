/** The report of a file that could not be measured: verdict `error`, the stable code and one-line message. */
import type { FileReport, Finding, ReportError } from "@tidemark/shared/types/report";

export function errorReport(relPath: string, sizeBytes: number, error: ReportError, findings: Finding[] = []): FileReport {
  return {
    path: relPath,
    sizeBytes,
    sha256: null,
    format: null,
    metadata: {},
    metrics: null,
    findings: [
      ...findings,
      { code: "unreadable", severity: "fail", channel: null, startSeconds: null, endSeconds: null, message: error.message },
    ],
    verdict: "error",
    error,
    spectrogram: null,
  };
}
