/**
 * The Files table keeps its filters, sort and page in the address bar, so a link (or the return from
 * sign-in) reopens exactly the same view. Anything unknown in the URL is dropped, not sent on.
 */
import { FILE_SORT_KEYS, REVIEW_STATES, type FileQuery, type FileSortKey, type ReviewState } from "@tidemark/shared/types/api";
import { FINDING_CODES, VERDICTS, type FindingCode, type Verdict } from "@tidemark/shared/types/codes";
import { PAGE_SIZES } from "../Pagination.tsx";

export const DEFAULT_FILE_PAGE_SIZE = 50;

function oneOf<T extends string>(allowed: readonly T[], value: string | null): T | undefined {
  return value !== null && (allowed as readonly string[]).includes(value) ? (value as T) : undefined;
}

function positiveInt(value: string | null): number | undefined {
  if (value === null || !/^\d+$/.test(value)) return undefined;
  const n = Number(value);
  return n > 0 ? n : undefined;
}

/** A cursor is the server's opaque token (base64url); anything else is dropped. */
function cursor(value: string | null): string | undefined {
  return value !== null && /^[A-Za-z0-9_-]{1,1500}$/.test(value) ? value : undefined;
}

export function parseFileQuery(params: URLSearchParams): FileQuery {
  const pageSize = positiveInt(params.get("pageSize"));
  const page = positiveInt(params.get("page")) ?? 1;
  // Page 2 onwards is reached by a cursor (the server seeks instead of counting rows off); page 1 needs none.
  const after = page > 1 ? cursor(params.get("after")) : undefined;
  const before = page > 1 && !after ? cursor(params.get("before")) : undefined;
  const sort = oneOf<FileSortKey>(FILE_SORT_KEYS, params.get("sort"));
  const q = params.get("q")?.trim();
  return {
    batch: positiveInt(params.get("batch")),
    collection: positiveInt(params.get("collection")),
    verdict: oneOf<Verdict>(VERDICTS, params.get("verdict")),
    reviewState: oneOf<ReviewState>(REVIEW_STATES, params.get("reviewState")),
    finding: oneOf<FindingCode>(FINDING_CODES, params.get("finding")),
    q: q ? q : undefined,
    sort,
    order: sort ? (oneOf(["asc", "desc"] as const, params.get("order")) ?? "asc") : undefined,
    after,
    before,
    page,
    pageSize: pageSize && (PAGE_SIZES as readonly number[]).includes(pageSize) ? pageSize : DEFAULT_FILE_PAGE_SIZE,
  };
}

/** Back to the address bar, leaving out defaults so plain views keep plain URLs. */
export function fileQueryToParams(query: FileQuery): URLSearchParams {
  const params = new URLSearchParams();
  const put = (name: string, value: string | number | undefined) => {
    if (value !== undefined && value !== "") params.set(name, String(value));
  };
  put("batch", query.batch);
  put("collection", query.collection);
  put("verdict", query.verdict);
  put("reviewState", query.reviewState);
  put("finding", query.finding);
  put("q", query.q);
  put("sort", query.sort);
  if (query.sort) put("order", query.order);
  if (query.page && query.page > 1) {
    put("page", query.page);
    put("after", query.after);
    if (!query.after) put("before", query.before);
  }
  if (query.pageSize && query.pageSize !== DEFAULT_FILE_PAGE_SIZE) put("pageSize", query.pageSize);
  return params;
}

export function hasFilters(query: FileQuery): boolean {
  return Boolean(query.batch || query.collection || query.verdict || query.reviewState || query.finding || query.q);
}
