/**
 * The README's accuracy table, made from the tests' own measurements: runs the test files that record rows
 * (tests/helpers/accuracyLog.ts) with TIDEMARK_ACCURACY_LOG set, then prints the Markdown table, or with
 * `--write` puts it into README.md between the accuracy-table markers. Variants of one case (20 onsets,
 * 20 level steps) are folded into one row showing the range of the values measured.
 *
 *   node --import tsx scripts/accuracy-table.ts [--write]
 */
import { execFileSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import type { AccuracyRow } from "../tests/helpers/accuracyLog.ts";

const root = path.resolve(import.meta.dirname, "..");
const TEST_FILES = ["tests/shared/loudnessMaxima.test.ts", "tests/shared/truePeak.test.ts", "tests/shared/bandwidth.test.ts", "tests/shared/clicks.test.ts"];
const START = "<!-- accuracy-table:start -->";
const END = "<!-- accuracy-table:end -->";

function collect(): AccuracyRow[] {
  const dir = mkdtempSync(path.join(tmpdir(), "tidemark-accuracy-"));
  const log = path.join(dir, "rows.jsonl");
  try {
    writeFileSync(log, "");
    execFileSync("npx", ["vitest", "run", ...TEST_FILES], { cwd: root, stdio: "inherit", env: { ...process.env, TIDEMARK_ACCURACY_LOG: log } });
    return readFileSync(log, "utf8")
      .split("\n")
      .filter(Boolean)
      .map((line) => JSON.parse(line) as AccuracyRow);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Variants fold into one group: "case 13-7 (48 kHz)" → "case 13, 20 variants (48 kHz)"; "step at −30 LUFS" → "20 steps". */
function groupKey(row: AccuracyRow): string {
  return `${row.measure}|${row.case
    .replace(/^(case \d+)-\d+/, "$1, variants")
    .replace(/step at -?\d+ LUFS/, "steps")
    .replace(/, (lowest|highest) reading of (\d+)/, ", $2 sines")}`;
}

const num = (x: number, digits = 2) => x.toFixed(digits).replace("-", "−");

function table(rows: AccuracyRow[]): string {
  const groups = new Map<string, AccuracyRow[]>();
  for (const r of rows) groups.set(groupKey(r), [...(groups.get(groupKey(r)) ?? []), r]);
  const lines = ["| measure | case | reference | expected | Tidemark | tolerance |", "|---|---|---|---|---|---|"];
  for (const [key, g] of groups) {
    const [measure, name] = key.split("|");
    const first = g[0];
    const caseName = g.length > 1 ? name.replace("variants", `${g.length} variants`).replace("steps", `${g.length} steps`) : first.case;
    const digits = Number.isInteger(first.measured) ? 0 : 2;
    let expected = first.expected;
    let value: string;
    if (g.length === 1) value = `${num(first.measured, digits)} ${first.unit}`;
    else if (g.every((r) => r.expected === first.expected)) {
      const values = g.map((r) => r.measured);
      value = `${num(Math.min(...values))} … ${num(Math.max(...values))} ${first.unit}`;
    } else {
      // Each row against its own expected level: show the worst error.
      expected = `${g[0].expected} … ${g[g.length - 1].expected}`;
      const worst = Math.max(...g.map((r) => Math.abs(r.measured - Number.parseFloat(r.expected))));
      value = `each within ${num(worst)} LU of its level`;
    }
    const failed = g.filter((r) => !r.passed).length;
    lines.push(`| ${measure} | ${caseName} | ${first.reference} | ${expected} | ${value}${failed ? ` (${failed} outside)` : ""} | ${first.tolerance} |`);
  }
  return lines.join("\n");
}

const rows = collect();
if (rows.length === 0) throw new Error("no accuracy rows were recorded: did the tests run?");
const markdown = table(rows);
if (process.argv.includes("--write")) {
  const readmePath = path.join(root, "README.md");
  const readme = readFileSync(readmePath, "utf8");
  const from = readme.indexOf(START);
  const to = readme.indexOf(END);
  if (from < 0 || to < from) throw new Error(`README.md has no ${START} … ${END} section to fill`);
  writeFileSync(readmePath, `${readme.slice(0, from + START.length)}\n${markdown}\n${readme.slice(to)}`);
  console.log(`README.md: accuracy table written (${rows.length} measurements)`);
} else console.log(markdown);
