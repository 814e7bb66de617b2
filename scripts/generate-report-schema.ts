/**
 * Writes the shipped JSON Schemas from their zod schemas: shared/schema/report.schema.json (the report) and
 * shared/schema/tidemark-config.schema.json (tidemark.json). Run `node --import tsx scripts/generate-report-schema.ts`.
 */
import { mkdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { reportJsonSchemaText } from "../shared/src/report/reportJsonSchema.ts";
import { projectConfigJsonSchemaText } from "../shared/src/types/projectConfig.ts";

const dir = path.join(path.dirname(fileURLToPath(import.meta.url)), "..", "shared", "schema");
mkdirSync(dir, { recursive: true });
for (const [name, text] of [
  ["report.schema.json", reportJsonSchemaText()],
  ["tidemark-config.schema.json", projectConfigJsonSchemaText()],
] as const) {
  const target = path.join(dir, name);
  writeFileSync(target, text);
  console.log(`wrote ${path.relative(process.cwd(), target)}`);
}
