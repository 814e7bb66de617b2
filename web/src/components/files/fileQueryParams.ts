/**
 * The Files table keeps its filters, sort and page in the address bar, so a link (or the return from
 * sign-in) reopens exactly the same view. The address bar is read and written with GET /api/files's own
 * contract (shared/src/contracts/files.ts): anything unknown or invalid in the URL is dropped, not sent on.
 */
import { pageSizeOf } from "@tidemark/shared/contracts/fields";
import { fileQuerySchema } from "@tidemark/shared/contracts/files";
import { readSearchParams, toSearchParams } from "@tidemark/shared/contracts/searchParams";
import type { FileQuery } from "@tidemark/shared/types/api";
import { PAGE_SIZES, sortOrderOf } from "../listSearch.ts";

export const DEFAULT_FILE_PAGE_SIZE = 50;

/** The address bar's form of the query: only the page sizes the table offers. */
const fileViewSchema = fileQuerySchema.safeExtend({ pageSize: pageSizeOf(PAGE_SIZES, DEFAULT_FILE_PAGE_SIZE) });

export function parseFileQuery(params: URLSearchParams): FileQuery {
  const query = readSearchParams(fileViewSchema, params);
  // Page 2 onwards is reached by a cursor (the server seeks instead of counting rows off); page 1 needs none.
  const after = query.page > 1 ? query.after : undefined;
  const before = query.page > 1 && !after ? query.before : undefined;
  return { ...query, order: sortOrderOf(query), after, before };
}

/** Back to the address bar, leaving out defaults so plain views keep plain URLs. */
export function fileQueryToParams(query: FileQuery): URLSearchParams {
  const paged = query.page !== undefined && query.page > 1;
  const after = paged ? query.after : undefined;
  const before = paged && !after ? query.before : undefined;
  return toSearchParams(fileViewSchema, { ...query, order: query.sort ? query.order : undefined, after, before }, { omitDefaults: true });
}

/** A link to the Files table showing this query, e.g. one batch's files. */
export function filesLink(query: FileQuery): string {
  const search = fileQueryToParams(query).toString();
  return search ? `/files?${search}` : "/files";
}

export function hasFilters(query: FileQuery): boolean {
  return Boolean(query.batch || query.collection || query.verdict || query.reviewState || query.finding || query.container || query.q);
}
