/** Plain-text table for a terminal: one line a file, then the findings worth reading, then the summary. */
import type { FileReport, Finding, ScanReport } from "../types/report.ts";

const MISSING = "n/a";

/** Short marks after the bit depth: "32f" float, "8a" A-law, "8u" µ-law. */
const ENCODING_SUFFIX: Record<string, string> = { pcm: "", float: "f", alaw: "a", mulaw: "u" };

function num(value: number | null | undefined, digits = 1): string {
  return value === null || value === undefined || !Number.isFinite(value) ? MISSING : value.toFixed(digits);
}

export function formatDuration(totalSeconds: number): string {
  const s = Math.max(0, totalSeconds);
  if (s < 60) return `${s.toFixed(1)} s`;
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const sec = Math.floor(s % 60);
  const mm = String(m).padStart(h > 0 ? 2 : 1, "0");
  return `${h > 0 ? `${h}:` : ""}${mm}:${String(sec).padStart(2, "0")}`;
}

function formatCell(f: FileReport): string {
  if (!f.format) return MISSING;
  const { container, encoding, sampleRateHz, bitDepth, channels } = f.format;
  return `${container} ${sampleRateHz / 1000}k/${bitDepth}${ENCODING_SUFFIX[encoding]} ${channels}ch`;
}

/** "clipping ×3, hum" for the findings of one severity. */
function codesWithCounts(findings: readonly Finding[]): string {
  const counts = new Map<string, number>();
  for (const f of findings) counts.set(f.code, (counts.get(f.code) ?? 0) + 1);
  return [...counts].map(([code, n]) => (n > 1 ? `${code} ×${n}` : code)).join(", ");
}

function findingsCell(f: FileReport): string {
  if (f.error) return `${f.error.code}`;
  const parts: string[] = [];
  const fails = f.findings.filter((x) => x.severity === "fail");
  const warns = f.findings.filter((x) => x.severity === "warn");
  if (fails.length) parts.push(`fail: ${codesWithCounts(fails)}`);
  if (warns.length) parts.push(`warn: ${codesWithCounts(warns)}`);
  return parts.join("; ");
}

function detailLine(f: Finding): string {
  const at = f.startSeconds === null ? "" : ` @ ${formatDuration(f.startSeconds)}`;
  const ch = f.channel === null ? "" : ` ch${f.channel + 1}`;
  return `    ${f.severity.padEnd(4)} ${f.code}${ch}${at}: ${f.message}`;
}

/** At most this many findings listed per file, so one broken file cannot flood the terminal. */
const MAX_DETAILS_PER_FILE = 5;

export function reportToTable(report: ScanReport): string {
  const header = ["VERDICT", "PATH", "FORMAT", "LENGTH", "LUFS", "dBTP", "FINDINGS"];
  const rows = report.files.map((f) => [
    f.verdict.toUpperCase(),
    f.path,
    formatCell(f),
    f.format ? formatDuration(f.format.durationSeconds) : MISSING,
    num(f.metrics?.integratedLufs),
    num(f.metrics?.truePeakDbtp),
    findingsCell(f),
  ]);
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
  const line = (cells: string[]): string =>
    cells
      .map((c, i) => (i === cells.length - 1 ? c : i >= 4 && i <= 5 ? c.padStart(widths[i]) : c.padEnd(widths[i])))
      .join("  ")
      .trimEnd();

  const out = [line(header)];
  for (const row of rows) out.push(line(row));

  const details: string[] = [];
  for (const f of report.files) {
    const worth = f.error ? [] : f.findings.filter((x) => x.severity !== "info");
    if (!f.error && worth.length === 0) continue;
    details.push(`  ${f.path}`);
    if (f.error) details.push(`    error ${f.error.code}: ${f.error.message}`);
    for (const x of worth.slice(0, MAX_DETAILS_PER_FILE)) details.push(detailLine(x));
    if (worth.length > MAX_DETAILS_PER_FILE) details.push(`    … and ${worth.length - MAX_DETAILS_PER_FILE} more`);
  }
  if (details.length) out.push("", "Findings:", ...details);

  const s = report.summary;
  out.push("", `${s.files} file(s): ${s.pass} pass, ${s.warn} warn, ${s.fail} fail, ${s.error} error  (profile ${report.profile.name})`);
  return `${out.join("\n")}\n`;
}
