/**
 * What the list pages share about their address bars: each page's query is its API contract (shared/src/
 * contracts/) with the page sizes the page offers, read with readSearchParams and written back without
 * defaults by toSearchParams.
 */

/** The page sizes every list offers. */
export const PAGE_SIZES = [25, 50, 100] as const;

/** A list sorts by a column only once one is chosen; the order then defaults to ascending. */
export function sortOrderOf(query: { sort?: string; order?: "asc" | "desc" }): "asc" | "desc" | undefined {
  return query.sort ? (query.order ?? "asc") : undefined;
}
