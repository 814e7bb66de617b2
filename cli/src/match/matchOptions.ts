/** Options of `tidemark match`, normalised by program.ts. */
import { InvalidArgumentError } from "commander";

export interface MatchOptions {
  /** JSON reports to compare with (empty when asking a server). */
  against: string[];
  /** Server base URL to ask instead, or null. */
  server: string | null;
  limit: number;
  json: boolean;
}

export const DEFAULT_MATCH_LIMIT = 10;
export const MAX_MATCH_LIMIT = 100;

export function parseMatchLimit(value: string): number {
  const n = Number(value);
  if (!/^\d+$/.test(value.trim()) || n < 1 || n > MAX_MATCH_LIMIT) {
    throw new InvalidArgumentError(`expected a whole number of matches from 1 to ${MAX_MATCH_LIMIT}, got "${value}".`);
  }
  return n;
}

export const MATCH_EXIT_CODES_HELP = `
Output: one match a line, best first: path, score (landmark hashes that agree on one time
offset) and offset in seconds (where <file> starts in the match; negative: before its start),
separated by tabs; with --server also the collection and the match's page in the portal.

Exit codes of match:
  0    at least one match
  1    no match
  2    bad invocation, a file or report that cannot be read, or no answer from the server`;
