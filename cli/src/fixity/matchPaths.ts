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

  // Offset: what the earlier path has in front of today's relative path ("" when they agree).
  const offsets = new Map<string, number>();
  let above = 0;
  for (const m of matches) {
    if (m.earlier === null) continue;
    if (m.earlier.endsWith(m.relPath) && (m.earlier.length === m.relPath.length || m.earlier[m.earlier.length - m.relPath.length - 1] === "/")) {
      const offset = m.earlier.slice(0, m.earlier.length - m.relPath.length);
      offsets.set(offset, (offsets.get(offset) ?? 0) + 1);
    } else {
      above += 1;
    }
  }
  let offset = "";
  let votes = 0;
  for (const [o, n] of offsets) if (n > votes) [offset, votes] = [o, n];
  const inScope = offset !== "" && votes >= above ? (p: string) => p.startsWith(offset) : () => true;
  return { matches, inScope };
}
