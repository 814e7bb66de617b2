/** zod parsing that turns issues into one readable 400 (or 422) message naming each bad field. */
import type { z } from "zod";
import { badRequest, type HttpError } from "./errors.ts";

export function formatIssues(issues: readonly z.core.$ZodIssue[], limit = 8): string {
  const parts = issues.slice(0, limit).map((i) => `${i.path.length ? i.path.join(".") : "(root)"}: ${i.message}`);
  if (issues.length > limit) parts.push(`… and ${issues.length - limit} more`);
  return parts.join("; ");
}

export function parseWith<S extends z.ZodType>(
  schema: S,
  input: unknown,
  what: string,
  toError: (message: string, details: unknown) => HttpError = (message, details) => badRequest(message, "invalid_request", details),
): z.infer<S> {
  const result = schema.safeParse(input);
  if (!result.success) {
    const issues = result.error.issues.map((i) => ({ path: i.path.join("."), message: i.message }));
    throw toError(`invalid ${what}: ${formatIssues(result.error.issues)}`, issues);
  }
  return result.data;
}
