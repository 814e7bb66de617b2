/** Parsing against a contract with one readable message naming each bad field, for the server's 400s and for tests. */
import type { z } from "zod";

/** Any contract; a body's schema carries its name in its description ("comment"), used in messages. */
export type ContractSchema = z.ZodType;
/** What a caller sends for a contract (before defaults and trimming). */
export type InputOf<S extends z.ZodType> = z.input<S>;

export interface ContractIssue {
  /** Dotted path of the field ("checks.0.outcome"), empty for the whole input. */
  path: string;
  message: string;
}

export type ContractResult<T> = { ok: true; data: T } | { ok: false; message: string; issues: ContractIssue[] };

export function formatIssues(issues: readonly z.core.$ZodIssue[], limit = 8): string {
  const parts = issues.slice(0, limit).map((i) => `${i.path.length ? i.path.join(".") : "(root)"}: ${i.message}`);
  if (issues.length > limit) parts.push(`… and ${issues.length - limit} more`);
  return parts.join("; ");
}

/** `what` names the input in the message: "invalid query: page: Too small: expected number to be >=1". */
export function checkContract<S extends z.ZodType>(schema: S, input: unknown, what: string): ContractResult<z.output<S>> {
  const result = schema.safeParse(input);
  if (result.success) return { ok: true, data: result.data };
  return {
    ok: false,
    message: `invalid ${what}: ${formatIssues(result.error.issues)}`,
    issues: result.error.issues.map((i) => ({ path: i.path.join("."), message: i.message })),
  };
}

/** A request the caller built does not meet its contract: a bug in the caller, not bad user input. */
export class ContractError extends Error {
  readonly issues: ContractIssue[];

  constructor(message: string, issues: ContractIssue[]) {
    super(message);
    this.name = "ContractError";
    this.issues = issues;
  }
}

export function parseContract<S extends z.ZodType>(schema: S, input: unknown, what: string): z.output<S> {
  const result = checkContract(schema, input, what);
  if (!result.ok) throw new ContractError(result.message, result.issues);
  return result.data;
}
