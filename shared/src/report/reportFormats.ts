/** The report writers by name: the CLI's --format choices are this registry's keys. */
import type { ScanReport } from "../types/report.ts";
import { reportToCsv } from "./csvReport.ts";
import { reportToJson } from "./jsonReport.ts";
import { reportToJunitXml, type JunitOptions } from "./junitReport.ts";
import { reportToTable } from "./tableReport.ts";

/** What a writer may need beyond the report: JUnit groups files into suites and honours --fail-on. */
export type ReportWriteOptions = JunitOptions;

export const reportWriters = {
  table: reportToTable,
  json: reportToJson,
  csv: reportToCsv,
  junit: reportToJunitXml,
} as const satisfies Record<string, (report: ScanReport, options?: ReportWriteOptions) => string>;

export type ReportFormat = keyof typeof reportWriters;

export const REPORT_FORMATS = Object.keys(reportWriters) as ReportFormat[];

export function isReportFormat(name: string): name is ReportFormat {
  return Object.hasOwn(reportWriters, name);
}
