/**
 * JUnit XML writer for CI: one testsuite for the batch, one testcase a file, a <failure> per fail finding,
 * an <error> for a file that could not be read, warnings in <system-out>.
 */
import type { FileReport, Finding, ScanReport } from "../types/report.ts";

// XML 1.0 forbids most C0 controls even as character references; a damaged file name must not break CI.
// eslint-disable-next-line no-control-regex
const INVALID_XML_CHARS = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g;

export function escapeXml(text: string): string {
  return text
    .replace(INVALID_XML_CHARS, "\uFFFD")
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    .replace(/'/g, "&apos;");
}

const seconds = (s: number): string => s.toFixed(3);

function when(f: Finding): string {
  if (f.startSeconds === null) return "";
  const end = f.endSeconds !== null && f.endSeconds !== f.startSeconds ? `–${f.endSeconds.toFixed(3)}` : "";
  return ` at ${f.startSeconds.toFixed(3)}${end} s`;
}

function where(f: Finding): string {
  return f.channel === null ? "" : ` (channel ${f.channel + 1})`;
}

function testcase(file: FileReport, classname: string): string {
  const attrs = `name="${escapeXml(file.path)}" classname="${escapeXml(classname)}"`;
  const body: string[] = [];
  if (file.error) {
    body.push(`      <error message="${escapeXml(file.error.message)}" type="${escapeXml(file.error.code)}"/>`);
  }
  for (const f of file.findings) {
    if (f.severity !== "fail" || file.error) continue;
    const text = `${f.code}${where(f)}${when(f)}: ${f.message}`;
    body.push(`      <failure message="${escapeXml(f.message)}" type="${escapeXml(f.code)}">${escapeXml(text)}</failure>`);
  }
  const warnings = file.findings.filter((f) => f.severity === "warn");
  if (warnings.length > 0) {
    const lines = warnings.map((f) => `warn ${f.code}${where(f)}${when(f)}: ${f.message}`).join("\n");
    body.push(`      <system-out>${escapeXml(lines)}</system-out>`);
  }
  return body.length === 0 ? `    <testcase ${attrs}/>` : `    <testcase ${attrs}>\n${body.join("\n")}\n    </testcase>`;
}

export function reportToJunitXml(report: ScanReport): string {
  const failures = report.files.reduce((n, f) => n + (f.error ? 0 : f.findings.filter((x) => x.severity === "fail").length), 0);
  const errors = report.summary.error;
  // The batch's wall time; per-file times are not in the report contract, so testcases carry none.
  const elapsedMs = Date.parse(report.finishedAt) - Date.parse(report.startedAt);
  const elapsed = seconds(Number.isFinite(elapsedMs) ? Math.max(0, elapsedMs) / 1000 : 0);
  const suite = `tidemark ${report.profile.name}`;
  const classname = `tidemark.${report.profile.name}`;
  const counts = `tests="${report.files.length}" failures="${failures}" errors="${errors}"`;
  return [
    `<?xml version="1.0" encoding="UTF-8"?>`,
    `<testsuites name="tidemark" ${counts} time="${elapsed}">`,
    `  <testsuite name="${escapeXml(suite)}" ${counts} skipped="0" time="${elapsed}" timestamp="${escapeXml(report.startedAt)}">`,
    ...report.files.map((f) => testcase(f, classname)),
    `  </testsuite>`,
    `</testsuites>`,
    ``,
  ].join("\n");
}
