/**
 * JSON writer. JSON.stringify already writes non-finite numbers as null, which is the contract's
 * "quiet values (−Infinity) are written as null"; NaN becomes null the same way.
 */
import type { ScanReport } from "../types/report.ts";

export function reportToJson(report: ScanReport): string {
  return `${JSON.stringify(report, null, 2)}\n`;
}
