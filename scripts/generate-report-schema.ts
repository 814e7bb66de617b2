/** Writes shared/schema/report.schema.json from the report's zod schema: `node --import tsx scripts/generate-report-schema.ts`. */
import { mkdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { reportJsonSchemaText } from "../shared/src/report/reportJsonSchema.ts";

const target = path.join(path.dirname(fileURLToPath(import.meta.url)), "..", "shared", "schema", "report.schema.json");
mkdirSync(path.dirname(target), { recursive: true });
writeFileSync(target, reportJsonSchemaText());
console.log(`wrote ${path.relative(process.cwd(), target)}`);
