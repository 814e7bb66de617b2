/**
 * The one CSV layout of a file result, for the CLI's `--format csv` and the portal's files export alike:
 * the same columns in the same order, the same finding-code join, the same formula guard, written by one
 * library (csv-stringify; RFC 4180 with CRLF records). Columns a side cannot know stay empty: the CLI has no
 * review state or server id, the server no local spectrogram path.
 */
import { stringify, type Options } from "csv-stringify/sync";
import type { FileReport, ReportError, FileMetrics, AudioFormat, ScanReport } from "../types/report.ts";

type Cell = string | number | null | undefined;

/** What one row is made of; both the report (CLI) and a stored file result (server) map onto it. */
export interface CsvFileRow {
  path: string;
  collection: string | null;
  batchId: number | null;
  batchKey: string | null;
  profile: string;
  scannedAt: string;
  verdict: string;
  reviewState: string | null;
  error: ReportError | null;
  sizeBytes: number;
  sha256: string | null;
  format: AudioFormat | null;
  metrics: FileMetrics | null;
  failFindings: number;
  warnFindings: number;
  /** Distinct codes, most severe first as the source lists them. */
  findingCodes: readonly string[];
  spectrogram: string | null;
  fileResultId: number | null;
}

const COLUMNS: readonly (readonly [string, (r: CsvFileRow) => Cell])[] = [
  ["path", (r) => r.path],
  ["collection", (r) => r.collection],
  ["batch_id", (r) => r.batchId],
  ["batch_key", (r) => r.batchKey],
  ["profile", (r) => r.profile],
  ["scanned_at", (r) => r.scannedAt],
  ["verdict", (r) => r.verdict],
  ["review_state", (r) => r.reviewState],
  ["error_code", (r) => r.error?.code],
  ["error_message", (r) => r.error?.message],
  ["size_bytes", (r) => r.sizeBytes],
  ["sha256", (r) => r.sha256],
  ["container", (r) => r.format?.container],
  ["encoding", (r) => r.format?.encoding],
  ["sample_rate_hz", (r) => r.format?.sampleRateHz],
  ["bit_depth", (r) => r.format?.bitDepth],
  ["channels", (r) => r.format?.channels],
  ["duration_seconds", (r) => r.format?.durationSeconds],
  ["integrated_lufs", (r) => r.metrics?.integratedLufs],
  ["loudness_range_lu", (r) => r.metrics?.loudnessRangeLu],
  ["true_peak_dbtp", (r) => r.metrics?.truePeakDbtp],
  ["sample_peak_dbfs", (r) => r.metrics?.samplePeakDbfs],
  ["rms_dbfs", (r) => r.metrics?.rmsDbfs],
  ["clipped_samples", (r) => r.metrics?.clippedSamples],
  ["clip_events", (r) => r.metrics?.clipEvents],
  ["dc_offset_percent", (r) => r.metrics?.dcOffsetPercent],
  ["bandwidth_hz", (r) => r.metrics?.bandwidthHz],
  ["effective_bit_depth", (r) => r.metrics?.effectiveBitDepth],
  ["fail_findings", (r) => r.failFindings],
  ["warn_findings", (r) => r.warnFindings],
  ["finding_codes", (r) => r.findingCodes.join(FINDING_CODE_SEPARATOR)],
  ["spectrogram", (r) => r.spectrogram],
  ["file_result_id", (r) => r.fileResultId],
];

export const CSV_COLUMNS: readonly string[] = COLUMNS.map(([name]) => name);

/** Codes never contain it (they are kebab-case), and a spreadsheet does not split on it. */
export const FINDING_CODE_SEPARATOR = ";";

/**
 * Spreadsheet formula injection (OWASP "CSV Injection"): a text cell whose first non-blank character is
 * = + - @ (or that starts with tab or CR) gets a leading apostrophe. Numbers are never guarded.
 */
export function guardCsvText(value: string | null | undefined): string {
  if (value === null || value === undefined) return "";
  return /^[\t\r]|^\s*[=+\-@]/.test(value) ? `'${value}` : value;
}

/** Cell values as csv-stringify receives them: quiet or missing values empty, text guarded. */
export function csvRecord(row: CsvFileRow): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [name, cell] of COLUMNS) {
    const value = cell(row);
    // Non-finite numbers are quiet or missing values: empty, like null.
    out[name] = value === null || value === undefined ? "" : typeof value === "number" ? (Number.isFinite(value) ? String(value) : "") : guardCsvText(value);
  }
  return out;
}

/** csv-stringify options shared by the CLI (sync) and the server (streaming). */
export const CSV_STRINGIFY_OPTIONS = {
  header: true,
  columns: [...CSV_COLUMNS],
  record_delimiter: "windows",
} as const satisfies Options;

/** The row of one file of a report, as the CLI writes it. */
export function csvRowOfReportFile(file: FileReport, report: Pick<ScanReport, "profile" | "startedAt">): CsvFileRow {
  return {
    path: file.path,
    collection: null,
    batchId: null,
    batchKey: null,
    profile: report.profile.name,
    scannedAt: report.startedAt,
    verdict: file.verdict,
    reviewState: null,
    error: file.error,
    sizeBytes: file.sizeBytes,
    sha256: file.sha256,
    format: file.format,
    metrics: file.metrics,
    failFindings: file.findings.filter((x) => x.severity === "fail").length,
    warnFindings: file.findings.filter((x) => x.severity === "warn").length,
    findingCodes: [...new Set(file.findings.map((x) => x.code))],
    spectrogram: file.spectrogram,
    fileResultId: null,
  };
}

export function reportToCsv(report: ScanReport): string {
  return stringify(
    report.files.map((f) => csvRecord(csvRowOfReportFile(f, report))),
    CSV_STRINGIFY_OPTIONS,
  );
}
