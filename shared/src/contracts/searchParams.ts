/**
 * Query schemas to and from URLSearchParams, for address bars and request URLs. Reading is forgiving:
 * a value that does not meet its field's schema is dropped (the field's default applies), as is any
 * name the schema does not know, so an old or hand-edited link still opens a sensible view. Writing
 * follows the schema's field order, leaves out empty values and, for address bars, the defaults.
 */
import { z } from "zod";
import { parseContract } from "./checkContract.ts";

/** A query contract: an object of fields that each read one text value. */
export type QuerySchema = z.ZodObject<z.ZodRawShape>;

/** What a caller may send: any subset of the parsed fields (the schema fills in the defaults). */
export type QueryOf<S extends QuerySchema> = Partial<z.output<S>>;

/** The query a view shows: the address bar's parameters, each one that meets its field's schema. */
export function readSearchParams<S extends QuerySchema>(schema: S, params: URLSearchParams): z.output<S> {
  const kept: Record<string, string> = {};
  for (const [name, field] of Object.entries(schema.shape)) {
    const raw = params.get(name);
    if (raw !== null && z.safeParse(field, raw).success) kept[name] = raw;
  }
  let parsed = schema.safeParse(kept);
  // Each field was checked alone; a rule across fields may still refuse them together: drop the fields it names.
  if (!parsed.success) {
    for (const issue of parsed.error.issues) delete kept[String(issue.path[0])];
    parsed = schema.safeParse(kept);
  }
  return parsed.success ? parsed.data : schema.parse({});
}

/** The schema's defaults: what an empty query parses to. */
export function defaultsOf<S extends QuerySchema>(schema: S): z.output<S> {
  return schema.parse({});
}

export interface WriteOptions {
  /** Leave out values equal to the schema's defaults, so plain views keep plain URLs (address bars). */
  omitDefaults?: boolean;
}

export function toSearchParams<S extends QuerySchema>(schema: S, query: QueryOf<S>, { omitDefaults = false }: WriteOptions = {}): URLSearchParams {
  const defaults: Record<string, unknown> = omitDefaults ? defaultsOf(schema) : {};
  const values = query as Record<string, unknown>;
  const params = new URLSearchParams();
  for (const name of Object.keys(schema.shape)) {
    const value = values[name];
    if (value === undefined || value === null || value === "") continue;
    if (omitDefaults && value === defaults[name]) continue;
    params.set(name, String(value));
  }
  return params;
}

/**
 * A request's query, checked against its contract (a ContractError names each bad field: a bug in the
 * caller) and complete with the defaults, so a request says exactly what it asks for.
 */
export function requestSearchParams<S extends QuerySchema>(schema: S, query: QueryOf<S>, what = "query"): URLSearchParams {
  return toSearchParams(schema, parseContract(schema, query, what));
}

/** `path?query` for a request, or just `path` when the query is empty. */
export function requestPath<S extends QuerySchema>(path: string, schema: S, query: QueryOf<S>): string {
  const search = requestSearchParams(schema, query).toString();
  return search ? `${path}?${search}` : path;
}
