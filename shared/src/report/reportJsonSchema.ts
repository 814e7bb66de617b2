/**
 * The JSON Schema of the report contract, generated from the zod schema (the one source of truth).
 * scripts/generate-report-schema.ts writes it to shared/schema/report.schema.json; a test keeps them in sync.
 */
import { z } from "zod";
import { REPORT_SCHEMA_ID, scanReportSchema } from "../types/report.ts";

export const REPORT_JSON_SCHEMA_ID = "https://tidemark.invalid/schema/report.schema.json";

export function reportJsonSchema(): Record<string, unknown> {
  const generated = z.toJSONSchema(scanReportSchema) as Record<string, unknown>;
  return {
    ...generated,
    $id: REPORT_JSON_SCHEMA_ID,
    title: `Tidemark scan report (${REPORT_SCHEMA_ID}; also accepts tidemark.report/1)`,
    description: "Output of `tidemark scan --format json`. Generated from shared/src/types/report.ts; do not edit by hand.",
  };
}

export function reportJsonSchemaText(): string {
  return `${JSON.stringify(reportJsonSchema(), null, 2)}\n`;
}
