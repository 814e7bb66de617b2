/**
 * Request validation against the shared contracts (shared/src/contracts/): one middleware for queries,
 * JSON bodies and multipart text fields, and parseWith for everything else (the report part). A failure
 * is one readable 400 (or 422) message naming each bad field.
 */
import type { RequestHandler, Response } from "express";
import type { z } from "zod";
import { checkContract } from "@tidemark/shared/contracts/checkContract";
import { badRequest, type HttpError } from "./errors.ts";

export function parseWith<S extends z.ZodType>(
  schema: S,
  input: unknown,
  what: string,
  toError: (message: string, details: unknown) => HttpError = (message, details) => badRequest(message, "invalid_request", details),
): z.infer<S> {
  const result = checkContract(schema, input, what);
  if (!result.ok) throw toError(result.message, result.issues);
  return result.data;
}

/** Where the input is: the query string, the JSON body (absent reads as {}), or a multipart upload's text fields. */
export type InputSource = "query" | "body" | "upload";

/** The middleware, and the parsed input it left for the handler: `const query = listQuery.of(res)`. */
export interface Validator<T> extends RequestHandler {
  of(res: Response): T;
}

/**
 * Validates one input of the request with its contract before the handler runs (400 `invalid_request`
 * naming each bad field). The message names the input by the schema's description ("invalid comment:
 * body: …"), or "query" for a query string.
 */
export function validate<S extends z.ZodType>(source: InputSource, schema: S): Validator<z.output<S>> {
  const what = schema.description ?? source;
  const parsed = new WeakMap<Response, z.output<S>>();
  const handler: RequestHandler = (req, res, next) => {
    const input: unknown = source === "query" ? req.query : source === "body" ? (req.body ?? {}) : (res.locals.upload?.fields ?? {});
    parsed.set(res, parseWith(schema, input, what));
    next();
  };
  return Object.assign(handler, {
    of(res: Response): z.output<S> {
      const value = parsed.get(res);
      if (value === undefined) throw new Error(`the ${what} was not validated: put its validate() middleware before the handler`);
      return value;
    },
  });
}
