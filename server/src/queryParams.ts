/** zod pieces for query strings: empty values count as absent, numbers arrive as strings. */
import { z } from "zod";

export const blankToUndefined = (v: unknown): unknown => (v === "" ? undefined : v);

export const optionalId = z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(2_147_483_647).optional());

const ISO_DATE = /^\d{4}-\d{2}-\d{2}(T[\d:.]+(Z|[+-]\d{2}:?\d{2})?)?$/;
const isoDate = z
  .string()
  .refine((s) => ISO_DATE.test(s) && !Number.isNaN(Date.parse(s)), "expected an ISO date such as 2026-12-01 or 2026-12-01T10:00:00Z");

/** Lower bound: a bare date means the start of that day (UTC). */
export const optionalDate = z.preprocess(blankToUndefined, isoDate.transform((s) => new Date(s)).optional());

/** Upper bound, inclusive: a bare date means the whole of that day (UTC). */
export const optionalDateTo = z.preprocess(
  blankToUndefined,
  isoDate.transform((s) => (s.length === 10 ? new Date(Date.parse(s) + 86_400_000 - 1) : new Date(s))).optional(),
);

export const pageParams = {
  page: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(1_000_000).default(1)),
  pageSize: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(200).default(50)),
};

export const orderParam = z.preprocess(blankToUndefined, z.enum(["asc", "desc"]).optional());

export function optionalEnum<const T extends readonly [string, ...string[]]>(values: T) {
  return z.preprocess(blankToUndefined, z.enum(values).optional());
}
