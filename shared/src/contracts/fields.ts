/**
 * Building blocks of the request contracts. Query strings arrive as text: an empty value counts as
 * absent and numbers are coerced. Parsed values stay as they travel (numbers, strings, enum members), so
 * the same schema both reads a request and writes one back; dates stay ISO strings and the server turns
 * them into bounds with `lowerBound`/`upperBound`.
 */
import { z } from "zod";

/** The largest id PostgreSQL's `integer` holds. */
export const INT32_MAX = 2_147_483_647;

export const blankToUndefined = (v: unknown): unknown => (v === "" ? undefined : v);

export const optionalId = z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(INT32_MAX).optional());

export function optionalEnum<const T extends readonly [string, ...string[]]>(values: T) {
  return z.preprocess(blankToUndefined, z.enum(values).optional());
}

/** Free text of a filter, trimmed; blank is absent. */
export const optionalText = (max: number) => z.preprocess(blankToUndefined, z.string().trim().max(max).optional());

export const orderParam = optionalEnum(["asc", "desc"]);
export type SortOrder = "asc" | "desc";

export const DEFAULT_PAGE_SIZE = 50;
export const MAX_PAGE_SIZE = 200;

export const pageParams = {
  page: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(1_000_000).default(1)),
  pageSize: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(MAX_PAGE_SIZE).default(DEFAULT_PAGE_SIZE)),
};

/**
 * A page size limited to the sizes a screen offers, with that screen's default: for reading an address
 * bar, where anything else falls back to the default. The server takes any size up to MAX_PAGE_SIZE.
 */
export function pageSizeOf(sizes: readonly number[], fallback: number) {
  return z.preprocess(
    blankToUndefined,
    z.coerce
      .number()
      .refine((n) => sizes.includes(n), `expected one of ${sizes.join(", ")}`)
      .default(fallback),
  );
}

const ISO_DATE = /^\d{4}-\d{2}-\d{2}(T[\d:.]+(Z|[+-]\d{2}:?\d{2})?)?$/;

/** A date (2026-12-01) or date and time (2026-12-01T10:00:00Z), kept as the text that arrived. */
export const optionalDate = z.preprocess(
  blankToUndefined,
  z
    .string()
    .refine((s) => ISO_DATE.test(s) && !Number.isNaN(Date.parse(s)), "expected an ISO date such as 2026-12-01 or 2026-12-01T10:00:00Z")
    .optional(),
);

/** Lower bound of a range: a bare date means the start of that day (UTC). */
export function lowerBound(date: string | undefined): Date | undefined {
  return date === undefined ? undefined : new Date(date);
}

/** Upper bound, inclusive: a bare date means the whole of that day (UTC). */
export function upperBound(date: string | undefined): Date | undefined {
  if (date === undefined) return undefined;
  return date.length === 10 ? new Date(Date.parse(date) + 86_400_000 - 1) : new Date(date);
}

/** Names shown in the portal, e-mails and CSV: trimmed, not blank, no control characters. */
export const label = (max: number) =>
  z
    .string()
    .trim()
    .min(1)
    .max(max)
    .refine((s) => !/\p{Cc}/u.test(s), "must not contain control characters");
