/**
 * Rows for the README's accuracy table, written by the tests that check them: each test records the
 * case, its outside reference, the expected value, the value Tidemark measured and the tolerance. With
 * TIDEMARK_ACCURACY_LOG=<file> set, the rows are appended to that file as JSON lines when the test file
 * ends; scripts/accuracy-table.ts turns them into the Markdown table. Without it nothing is written.
 */
import { appendFileSync } from "node:fs";
import { afterAll } from "vitest";

export interface AccuracyRow {
  /** Groups rows in the table, e.g. "max momentary loudness". */
  measure: string;
  case: string;
  reference: string;
  expected: string;
  measured: number;
  unit: string;
  tolerance: string;
  passed: boolean;
}

const rows: AccuracyRow[] = [];

// Registered while the importing test file is collected (each test file gets its own module instance).
afterAll(() => {
  const path = process.env.TIDEMARK_ACCURACY_LOG;
  if (!path || rows.length === 0) return;
  appendFileSync(path, rows.map((r) => JSON.stringify(r)).join("\n") + "\n");
});

export function recordAccuracy(row: AccuracyRow): void {
  rows.push(row);
}
