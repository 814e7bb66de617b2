/**
 * JUnit XML for CI, in the shape of the JUnit schema CI servers import (junit-10.xsd): one <testsuite> per
 * scan root (or one for the whole report), one <testcase> per file, at most one <failure> per testcase
 * (its message lists the fail findings, its text each with its time), <error> for a file that could not be
 * read, warnings in <system-out>, and the judging profile in <properties>. `failures` counts failed
 * testcases, not findings, so it agrees with what a CI server shows.
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

/** Which findings make a testcase fail: the profile's fails only, or warnings too (`--fail-on warn`). */
export type FailOn = "fail" | "warn";

export interface JunitSuite {
  /** Shown as the testsuite's name: the scan root as the user typed it, or a collection. */
  name: string;
  /** Report paths under this suite start with this prefix ("" takes every file). */
  prefix: string;
}

export interface JunitOptions {
  /** Default: one suite for the whole report, named after the profile. */
  suites?: readonly JunitSuite[];
  failOn?: FailOn;
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

/** "clipping ×2, hum" */
function codeCounts(findings: readonly Finding[]): string {
  const counts = new Map<string, number>();
  for (const f of findings) counts.set(f.code, (counts.get(f.code) ?? 0) + 1);
  return [...counts].map(([code, n]) => (n > 1 ? `${code} ×${n}` : code)).join(", ");
}

function failingFindings(file: FileReport, failOn: FailOn): Finding[] {
  if (file.error) return [];
  return file.findings.filter((f) => f.severity === "fail" || (failOn === "warn" && f.severity === "warn"));
}

function testcase(file: FileReport, classname: string, failOn: FailOn): string {
  const attrs = `name="${escapeXml(file.path)}" classname="${escapeXml(classname)}"`;
  const body: string[] = [];
  if (file.error) {
    body.push(`      <error message="${escapeXml(file.error.message)}" type="${escapeXml(file.error.code)}"/>`);
  }
  const failing = failingFindings(file, failOn);
  if (failing.length > 0) {
    const message = `${failing.length} finding${failing.length === 1 ? "" : "s"} failed the profile: ${codeCounts(failing)}`;
    const text = failing.map((f) => `${f.severity} ${f.code}${where(f)}${when(f)}: ${f.message}`).join("\n");
    body.push(`      <failure message="${escapeXml(message)}" type="${escapeXml(failing[0].code)}">${escapeXml(text)}</failure>`);
  }
  const warnings = failOn === "warn" ? [] : file.findings.filter((f) => f.severity === "warn");
  if (warnings.length > 0) {
    const lines = warnings.map((f) => `warn ${f.code}${where(f)}${when(f)}: ${f.message}`).join("\n");
    body.push(`      <system-out>${escapeXml(lines)}</system-out>`);
  }
  return body.length === 0 ? `    <testcase ${attrs}/>` : `    <testcase ${attrs}>\n${body.join("\n")}\n    </testcase>`;
}

interface Counts {
  tests: number;
  failures: number;
  errors: number;
}

function countsOf(files: readonly FileReport[], failOn: FailOn): Counts {
  let failures = 0;
  let errors = 0;
  for (const f of files) {
    if (f.error) errors++;
    else if (failingFindings(f, failOn).length > 0) failures++;
  }
  return { tests: files.length, failures, errors };
}

const countAttrs = (c: Counts): string => `tests="${c.tests}" failures="${c.failures}" errors="${c.errors}"`;

/** Each file goes to the suite with the longest matching prefix; files matching none go to the last suite. */
function groupFiles(files: readonly FileReport[], suites: readonly JunitSuite[]): FileReport[][] {
  const groups = suites.map((): FileReport[] => []);
  const order = suites.map((s, i) => ({ i, prefix: s.prefix })).sort((a, b) => b.prefix.length - a.prefix.length);
  for (const file of files) {
    const hit = order.find((s) => s.prefix === "" || file.path === s.prefix || file.path.startsWith(s.prefix.endsWith("/") ? s.prefix : `${s.prefix}/`));
    groups[hit ? hit.i : groups.length - 1].push(file);
  }
  return groups;
}

export function reportToJunitXml(report: ScanReport, options: JunitOptions = {}): string {
  const failOn = options.failOn ?? "fail";
  const suites = options.suites && options.suites.length > 0 ? options.suites : [{ name: `tidemark ${report.profile.name}`, prefix: "" }];
  const groups = groupFiles(report.files, suites);
  // The batch's wall time; per-file times are not in the report contract, so testcases carry none.
  const elapsedMs = Date.parse(report.finishedAt) - Date.parse(report.startedAt);
  const elapsed = seconds(Number.isFinite(elapsedMs) ? Math.max(0, elapsedMs) / 1000 : 0);
  const classname = `tidemark.${report.profile.name}`;
  const properties = [
    `    <properties>`,
    `      <property name="profile" value="${escapeXml(report.profile.name)}"/>`,
    ...(report.profile.hash ? [`      <property name="profile.hash" value="${escapeXml(report.profile.hash)}"/>`] : []),
    `      <property name="fail-on" value="${failOn}"/>`,
    `      <property name="tool" value="${escapeXml(`${report.tool.name} ${report.tool.version}`)}"/>`,
    `    </properties>`,
  ];
  const body: string[] = [];
  for (const [i, suite] of suites.entries()) {
    const files = groups[i];
    if (files.length === 0 && suites.length > 1) continue;
    body.push(
      `  <testsuite name="${escapeXml(suite.name)}" ${countAttrs(countsOf(files, failOn))} skipped="0" time="${elapsed}" timestamp="${escapeXml(report.startedAt)}">`,
      ...properties,
      ...files.map((f) => testcase(f, classname, failOn)),
      `  </testsuite>`,
    );
  }
  return [
    `<?xml version="1.0" encoding="UTF-8"?>`,
    `<testsuites name="tidemark ${escapeXml(report.profile.name)}" ${countAttrs(countsOf(report.files, failOn))} time="${elapsed}">`,
    ...body,
    `</testsuites>`,
    ``,
  ].join("\n");
}
