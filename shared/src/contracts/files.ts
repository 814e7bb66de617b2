/**
 * GET /api/files (the Files table), PATCH /api/files/:id and POST /api/files/review (review state), and
 * POST /api/files/:id/comments. The list's query is one object so a new parameter (a cursor, say) is one
 * more field here: the server, the portal's address bar and its requests all follow.
 */
import { z } from "zod";
import { CONTAINERS, FINDING_CODES, VERDICTS } from "../types/codes.ts";
import { FILE_SORT_KEYS, REVIEW_STATES } from "../types/api.ts";
import { blankToUndefined, INT32_MAX, optionalEnum, optionalId, optionalText, orderParam, pageParams } from "./fields.ts";
import type { QueryOf } from "./searchParams.ts";

const optionalCursor = z.preprocess(
  blankToUndefined,
  z.string().regex(/^[A-Za-z0-9_-]{1,1500}$/, "expected a cursor from a previous page's nextCursor or prevCursor").optional(),
);

export const fileQueryFields = {
  batch: optionalId,
  collection: optionalId,
  verdict: optionalEnum(VERDICTS),
  reviewState: optionalEnum(REVIEW_STATES),
  finding: optionalEnum(FINDING_CODES),
  /** `format.container` of the stored report ("flac", "aiff", "aifc", "wav", "bwf", "rf64"). */
  container: optionalEnum(CONTAINERS),
  q: optionalText(200),
  sort: optionalEnum(FILE_SORT_KEYS),
  order: orderParam,
  page: pageParams.page,
  /**
   * A previous answer's nextCursor (the page after it) or prevCursor (the page before), for the same sort
   * and order: opaque base64url text here; the server decodes and checks it (services/fileList.ts).
   */
  after: optionalCursor,
  before: optionalCursor,
  pageSize: pageParams.pageSize,
};

export const fileQuerySchema = z.object(fileQueryFields).strict();

/** GET /api/files as parsed: every default filled in. */
export type FileListQuery = z.output<typeof fileQuerySchema>;
/** GET /api/files as sent (all optional). */
export type FileQuery = QueryOf<typeof fileQuerySchema>;

const reviewChange = {
  reviewState: z.enum(REVIEW_STATES),
  reason: z.string().trim().max(2000).default(""),
};

/** PATCH /api/files/:id body. `reason` is optional for accepted/pending, required for flagged/retransfer. */
export const reviewChangeSchema = z.object(reviewChange).strict().describe("review change");
export type ReviewChangeRequest = z.input<typeof reviewChangeSchema>;

/** POST /api/files/review (bulk) body. */
export const bulkReviewChangeSchema = z
  .object({ ids: z.array(z.number().int().min(1).max(INT32_MAX)).min(1).max(1000), ...reviewChange })
  .strict()
  .describe("bulk review change");
export type BulkReviewChangeRequest = z.input<typeof bulkReviewChangeSchema>;

/** POST /api/files/:id/comments body: a comment may be anchored to a time (and channel) of the recording. */
export const createCommentSchema = z
  .object({
    body: z.string().trim().min(1).max(5000),
    atSeconds: z.number().finite().min(0).nullable().optional(),
    channel: z.number().int().min(0).max(INT32_MAX).nullable().optional(),
  })
  .strict()
  .describe("comment");
export type CreateCommentRequest = z.input<typeof createCommentSchema>;
