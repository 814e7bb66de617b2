/**
 * Text fields of POST /api/ingest (multipart, beside the report and artefact parts). The report itself
 * is the report contract (types/report.ts); the parts are checked by the server as they stream in.
 */
import { z } from "zod";
import { label } from "./fields.ts";

export const ingestFieldsSchema = z.object({ collection: label(200), batchKey: label(200) }).describe("upload fields");
export type IngestFields = z.input<typeof ingestFieldsSchema>;
