/** Query of POST /api/duplicates/lookup (the body is the encoded fingerprint as text/plain). */
import { z } from "zod";
import type { QueryOf } from "./searchParams.ts";

export const fingerprintLookupQuerySchema = z.object({ limit: z.coerce.number().int().min(1).max(100).default(10) }).strict();
export type FingerprintLookupQuery = QueryOf<typeof fingerprintLookupQuerySchema>;
