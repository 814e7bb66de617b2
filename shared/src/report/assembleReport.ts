/** Builds the report document (REPORT_SCHEMA_ID) from file results: stable file order and the verdict summary. */
import { REPORT_SCHEMA_ID } from "../types/codes.ts";
import type { FileReport, ProfileLimits, ReportSummary, ScanReport } from "../types/report.ts";

export interface ReportHeader {
  tool: { name: string; version: string };
  profile: { name: string; hash?: string; limits?: ProfileLimits };
  startedAt: string;
  finishedAt: string;
}

/** Code-point order, so the same files sort the same on every machine and locale. */
export function compareReportPaths(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

export function summarizeVerdicts(files: readonly FileReport[]): ReportSummary {
  const summary: ReportSummary = { files: files.length, pass: 0, warn: 0, fail: 0, error: 0 };
  for (const f of files) summary[f.verdict] += 1;
  return summary;
}

export function assembleReport(header: ReportHeader, files: readonly FileReport[]): ScanReport {
  // Look-alike names (not UTF-8) show the same path: their bytes keep the order the same from run to run.
  const sorted = [...files].sort((a, b) => compareReportPaths(a.path, b.path) || byBytes(a.pathBytes, b.pathBytes));
  return {
    schema: REPORT_SCHEMA_ID,
    tool: header.tool,
    profile: header.profile,
    startedAt: header.startedAt,
    finishedAt: header.finishedAt,
    summary: summarizeVerdicts(sorted),
    files: sorted,
  };
}

function byBytes(a: string | undefined, b: string | undefined): number {
  const x = a ?? "";
  const y = b ?? "";
  return x < y ? -1 : x > y ? 1 : 0;
}
