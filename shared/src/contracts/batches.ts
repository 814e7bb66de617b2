/** GET /api/batches. */
import { z } from "zod";
import { BATCH_SORT_KEYS } from "../types/api.ts";
import { optionalDate, optionalEnum, optionalId, orderParam, pageParams } from "./fields.ts";
import type { QueryOf } from "./searchParams.ts";

export const batchQuerySchema = z
  .object({
    collection: optionalId,
    /** Finds a batch by number ("42" or "#42"), or by part of its batch key or collection name. */
    q: z.string().trim().max(200).optional(),
    /** When the scan ran (the batch's start), inclusive; a bare date is the whole day (UTC). */
    from: optionalDate,
    to: optionalDate,
    sort: optionalEnum(BATCH_SORT_KEYS),
    order: orderParam,
    ...pageParams,
  })
  .strict();

export type BatchListQuery = z.output<typeof batchQuerySchema>;
export type BatchQuery = QueryOf<typeof batchQuerySchema>;
