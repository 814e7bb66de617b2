/** What `tidemark match` prints: one tab-separated line a match (see MATCH_EXIT_CODES_HELP), or JSON. */

export interface FoundMatch {
  path: string;
  score: number;
  /** Where the query file's t = 0 falls in the match, seconds. */
  offsetSeconds: number;
  /** With --server: where the match lives. */
  collection?: string;
  fileResultId?: number;
  url?: string;
}

export function matchLines(matches: readonly FoundMatch[]): string {
  return matches
    .map((m) => {
      const cells = [m.path, String(m.score), m.offsetSeconds.toFixed(2)];
      if (m.collection !== undefined) cells.push(m.collection);
      if (m.url !== undefined) cells.push(m.url);
      // A tab or newline inside a path would break the columns; nothing else is escaped.
      return cells.map((c) => c.replace(/[\t\n\r]/g, " ")).join("\t");
    })
    .map((line) => `${line}\n`)
    .join("");
}
