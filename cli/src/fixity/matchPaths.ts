/**
 * Lines up the files found now with the paths of an earlier report, whatever folder either was run from.
 * Report paths are relative to the common folder of the scan's roots; today's files are relative to the
 * common folder of verify's roots, which may sit above or below it. Each file is matched on the longest
 * tail of its absolute path that is an earlier report path; the most common offset between the two path
 * spaces then says which earlier files verify was asked about, so checking one sub-folder does not list
 * the rest of the archive as missing.
 */

export interface PathMatch {
  /** Today's path, relative to verify's roots. */
  relPath: string;
  /** The earlier report's path it matched, or null. */
  earlier: string | null;
}

export interface PathAlignment {
  matches: PathMatch[];
  /**
   * Earlier paths inside what verify looked at: under the common offset when the matches agree on one
   * below the scan's root, every earlier path otherwise (verify ran above the scan's root, or nothing matched).
   */
  inScope: (earlierPath: string) => boolean;
  /** Today's relative path as the earlier report would write it (the common offset put in front). */
  toEarlier: (relPath: string) => string;
}

/** `a/b/c.wav` → ["c.wav", "b/c.wav", "a/b/c.wav"] */
function tails(segments: readonly string[]): string[] {
  const out: string[] = [];
  for (let k = 1; k <= segments.length; k++) out.push(segments.slice(segments.length - k).join("/"));
  return out;
}

export function alignPaths(current: readonly { relPath: string; absPosix: string }[], earlierPaths: ReadonlySet<string>): PathAlignment {
  const claimed = new Map<string, number>();
  const matches: PathMatch[] = [];
  for (const [i, file] of current.entries()) {
    let best: string | null = null;
    // An exact relative match wins; otherwise the longest tail of the absolute path.
    if (earlierPaths.has(file.relPath)) best = file.relPath;
    else for (const tail of tails(file.absPosix.split("/").filter((s) => s !== ""))) if (earlierPaths.has(tail)) best = tail;
    const other = best === null ? undefined : claimed.get(best);
    if (best !== null && other !== undefined) {
      // Two files on one earlier path: the one whose relative path is that path keeps it.
      if (current[other].relPath === best) best = null;
      else matches[other] = { relPath: current[other].relPath, earlier: null };
    }
    if (best !== null) claimed.set(best, i);
    matches.push({ relPath: file.relPath, earlier: best });
  }

  // Offset between the two path spaces: "+X" when earlier paths carry X in front of today's relative paths
  // (verify ran below the scan's root), "-X" when today's carry X in front (verify ran above it). The most
  // common one wins (an exact match breaks ties); matches that disagree with it are coincidences of name,
  // such as a file moved into a sub-folder, and are dropped so the SHA-256 can find them instead.
  const keyOf = (m: PathMatch): string | null => {
    if (m.earlier === null) return null;
    return m.earlier.endsWith(m.relPath) ? `+${m.earlier.slice(0, m.earlier.length - m.relPath.length)}` : `-${m.relPath.slice(0, m.relPath.length - m.earlier.length)}`;
  };
  const votes = new Map<string, number>();
  for (const m of matches) {
    const key = keyOf(m);
    if (key !== null) votes.set(key, (votes.get(key) ?? 0) + 1);
  }
  let best: string | null = null;
  for (const [key, n] of votes) {
    const current = best === null ? -1 : votes.get(best)!;
    if (n > current || (n === current && (key === "+" || (best !== "+" && key.length < best!.length)))) best = key;
  }
  for (const [i, m] of matches.entries()) if (m.earlier !== null && keyOf(m) !== best) matches[i] = { relPath: m.relPath, earlier: null };
  const offset = best !== null && best.startsWith("+") ? best.slice(1) : "";
  const below = offset !== "";
  const inScope = below ? (p: string) => p.startsWith(offset) : () => true;
  return { matches, inScope, toEarlier: (relPath) => (below ? offset + relPath : relPath) };
}
