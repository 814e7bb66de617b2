/** CSV writer (RFC 4180: CRLF rows, fields quoted when they hold a comma, quote or line break): one row a file. */
import type { FileReport, ScanReport } from "../types/report.ts";

type Cell = string | number | null | undefined;

const COLUMNS: readonly [string, (f: FileReport) => Cell][] = [
  ["path", (f) => f.path],
  ["verdict", (f) => f.verdict],
  ["error_code", (f) => f.error?.code],
  ["error_message", (f) => f.error?.message],
  ["size_bytes", (f) => f.sizeBytes],
  ["sha256", (f) => f.sha256],
  ["container", (f) => f.format?.container],
  ["encoding", (f) => f.format?.encoding],
  ["sample_rate_hz", (f) => f.format?.sampleRateHz],
  ["bit_depth", (f) => f.format?.bitDepth],
  ["channels", (f) => f.format?.channels],
  ["duration_seconds", (f) => f.format?.durationSeconds],
  ["integrated_lufs", (f) => f.metrics?.integratedLufs],
  ["loudness_range_lu", (f) => f.metrics?.loudnessRangeLu],
  ["true_peak_dbtp", (f) => f.metrics?.truePeakDbtp],
  ["sample_peak_dbfs", (f) => f.metrics?.samplePeakDbfs],
  ["rms_dbfs", (f) => f.metrics?.rmsDbfs],
  ["clipped_samples", (f) => f.metrics?.clippedSamples],
  ["clip_events", (f) => f.metrics?.clipEvents],
  ["dc_offset_percent", (f) => f.metrics?.dcOffsetPercent],
  ["bandwidth_hz", (f) => f.metrics?.bandwidthHz],
  ["effective_bit_depth", (f) => f.metrics?.effectiveBitDepth],
  ["fail_findings", (f) => f.findings.filter((x) => x.severity === "fail").length],
  ["warn_findings", (f) => f.findings.filter((x) => x.severity === "warn").length],
  ["finding_codes", (f) => [...new Set(f.findings.map((x) => x.code))].join(";")],
  ["spectrogram", (f) => f.spectrogram],
];

export const CSV_COLUMNS: readonly string[] = COLUMNS.map(([name]) => name);

export function csvField(value: Cell): string {
  if (value === null || value === undefined) return "";
  // Non-finite numbers are quiet or missing values: empty, like null.
  const text = typeof value === "number" ? (Number.isFinite(value) ? String(value) : "") : value;
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

export function reportToCsv(report: ScanReport): string {
  const rows = [CSV_COLUMNS.map(csvField).join(",")];
  for (const file of report.files) rows.push(COLUMNS.map(([, cell]) => csvField(cell(file))).join(","));
  return `${rows.join("\r\n")}\r\n`;
}
