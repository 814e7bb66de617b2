/** Query of GET /api/exports/files.csv (the audit export's is in audit.ts). */
import { z } from "zod";
import { optionalDate, optionalId } from "./fields.ts";
import type { QueryOf } from "./searchParams.ts";

export const filesCsvQuerySchema = z.object({ collection: optionalId, from: optionalDate, to: optionalDate }).strict();
export type FilesCsvQuery = QueryOf<typeof filesCsvQuerySchema>;
