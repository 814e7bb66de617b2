/**
 * Match scoring by the histogram of time offsets, as in "An Industrial-Strength Audio Search
 * Algorithm" (Wang, 2003): every hash the query shares with a candidate gives one offset
 * (t_candidate − t_query); a true copy piles its hits into one offset, chance collisions scatter.
 *
 * Kept apart from any index so the server can score rows from its SQL index the same way
 * (table fingerprint_hashes(version, hash, file_id, time_seconds), btree on (version, hash);
 * hashes (f1: 9 bits, Δf: 10, Δt: 6) are < 2^25, so a plain PostgreSQL integer holds them):
 *
 *   SELECT hash, file_id, time_seconds FROM fingerprint_hashes
 *    WHERE version = $1 AND hash = ANY($2) AND file_id <> $3      -- $2 = distinctHashes(fp)
 *
 * then number the returned file ids densely (0..n−1, keep the array to map back) and call
 * `scorePostings(fp, { hashes, candidates, times, count })`. Results are best first with
 * `offsetSeconds` = where the query's t = 0 falls in that file. Hashes found in very many files
 * (the in-memory index skips those with > 2000 rows) are worth excluding in SQL too.
 */
import { FINGERPRINT_GRID } from "./fingerprinter.ts";
import type { Fingerprint } from "./types.ts";

/**
 * Scores below this are treated as chance. Measured on synthesised programmes (tests/shared/
 * fingerprint{Match,FalseMatch,Index}.test.ts): unrelated 40 s files reach at most 4, copies sharing
 * 30–40 s of audio score 95–360 and a 10 s excerpt ~75, so a few seconds of shared audio clear it.
 */
export const DEFAULT_MIN_SCORE = 12;

/** Offsets are counted in bins of one analysis hop; a hit counts for its bin and both neighbours. */
export const OFFSET_BIN_SECONDS = FINGERPRINT_GRID.hopSeconds;

export interface OffsetHits {
  /** Dense candidate number (0 ≤ n < 2^30) of each hit. */
  candidates: Uint32Array;
  /** t_candidate − t_query of each hit, seconds. */
  offsetsSeconds: Float64Array;
  count: number;
}

export interface ScoreOptions {
  /** Candidates scoring below this are dropped (default DEFAULT_MIN_SCORE). */
  minScore?: number;
  /** At most this many results (default: all). */
  maxResults?: number;
}

export interface CandidateScore {
  candidate: number;
  score: number;
  /** Mean offset of the hits in the winning window: the query's t = 0 in the candidate, seconds. */
  offsetSeconds: number;
}

const BIN_BITS = 23;
const BIN_SPAN = 2 ** BIN_BITS;
const BIN_BIAS = 2 ** (BIN_BITS - 1);
const MAX_CANDIDATE = 2 ** 30;

function resolveOptions(o: ScoreOptions | undefined): { minScore: number; maxResults: number } {
  const minScore = o?.minScore ?? DEFAULT_MIN_SCORE;
  const maxResults = o?.maxResults ?? Number.POSITIVE_INFINITY;
  if (!(minScore >= 1)) throw new RangeError(`minScore must be ≥ 1, got ${o?.minScore}`);
  if (!(maxResults >= 1)) throw new RangeError(`maxResults must be ≥ 1, got ${o?.maxResults}`);
  return { minScore, maxResults };
}

/** Best offset per candidate; results best first (ties: lower candidate number). */
export function scoreOffsetHits(hits: OffsetHits, options?: ScoreOptions): CandidateScore[] {
  const { minScore, maxResults } = resolveOptions(options);
  const { candidates, offsetsSeconds, count } = hits;
  if (count > candidates.length || count > offsetsSeconds.length) {
    throw new RangeError(`hits.count ${count} exceeds the arrays (${candidates.length}, ${offsetsSeconds.length})`);
  }
  // A candidate with fewer hits than minScore cannot reach it: count first, sort only the rest.
  // Chance collisions spread over many candidates, so this usually leaves a small fraction to sort.
  let maxCandidate = 0;
  for (let i = 0; i < count; i++) {
    const c = candidates[i];
    if (c >= MAX_CANDIDATE) throw new RangeError(`candidate numbers must be < 2^30, got ${c}`);
    if (c > maxCandidate) maxCandidate = c;
  }
  const isDense = maxCandidate < 8 * count + 65536;
  const denseCounts = isDense ? new Uint32Array(maxCandidate + 1) : null;
  const sparseCounts = isDense ? null : new Map<number, number>();
  for (let i = 0; i < count; i++) {
    const c = candidates[i];
    if (denseCounts) denseCounts[c]++;
    else sparseCounts!.set(c, (sparseCounts!.get(c) ?? 0) + 1);
  }
  const hitsOf = (c: number): number => (denseCounts ? denseCounts[c] : sparseCounts!.get(c)!);
  let eligible = 0;
  for (let i = 0; i < count; i++) if (hitsOf(candidates[i]) >= minScore) eligible++;

  // One sortable number per hit: candidate in the high bits, offset bin in the low 23 bits.
  const keys = new Float64Array(eligible);
  let k = 0;
  for (let i = 0; i < count; i++) {
    const c = candidates[i];
    if (hitsOf(c) < minScore) continue;
    const bin = Math.round(offsetsSeconds[i] / OFFSET_BIN_SECONDS);
    if (!(bin > -BIN_BIAS && bin < BIN_BIAS)) throw new RangeError(`offset out of range: ${offsetsSeconds[i]} s`);
    keys[k++] = c * BIN_SPAN + (bin + BIN_BIAS);
  }
  keys.sort();

  const found: { candidate: number; score: number; bin: number }[] = [];
  let i = 0;
  while (i < eligible) {
    const candidate = Math.floor(keys[i] / BIN_SPAN);
    const end = candidate * BIN_SPAN + BIN_SPAN;
    // Runs of equal bins within this candidate; window = run + adjacent runs one bin away.
    let bestScore = 0;
    let bestBin = 0;
    let prevBin = Number.NaN;
    let prevCount = 0;
    let runStart = i;
    while (runStart < eligible && keys[runStart] < end) {
      const key = keys[runStart];
      let runEnd = runStart + 1;
      while (runEnd < eligible && keys[runEnd] === key) runEnd++;
      const bin = key - candidate * BIN_SPAN - BIN_BIAS;
      const runCount = runEnd - runStart;
      let nextCount = 0;
      if (runEnd < eligible && keys[runEnd] === key + 1) {
        let j = runEnd;
        while (j < eligible && keys[j] === key + 1) j++;
        nextCount = j - runEnd;
      }
      const windowScore = runCount + (prevBin === bin - 1 ? prevCount : 0) + nextCount;
      if (windowScore > bestScore) {
        bestScore = windowScore;
        bestBin = bin;
      }
      prevBin = bin;
      prevCount = runCount;
      runStart = runEnd;
    }
    if (bestScore >= minScore) found.push({ candidate, score: bestScore, bin: bestBin });
    i = runStart;
  }
  if (found.length === 0) return [];

  // Refine: mean offset of the hits in each winner's three-bin window.
  const slot = new Map<number, number>();
  found.forEach((f, n) => slot.set(f.candidate, n));
  const sums = new Float64Array(found.length);
  const counts = new Float64Array(found.length);
  for (let h = 0; h < count; h++) {
    const n = slot.get(candidates[h]);
    if (n === undefined) continue;
    const bin = Math.round(offsetsSeconds[h] / OFFSET_BIN_SECONDS);
    if (Math.abs(bin - found[n].bin) > 1) continue;
    sums[n] += offsetsSeconds[h];
    counts[n] += 1;
  }
  const results = found.map((f, n) => ({ candidate: f.candidate, score: f.score, offsetSeconds: sums[n] / counts[n] }));
  results.sort((a, b) => b.score - a.score || a.candidate - b.candidate);
  return results.length > maxResults ? results.slice(0, maxResults) : results;
}

/** Rows of any hash index (hash → candidate, time), parallel arrays. */
export interface Postings {
  hashes: ArrayLike<number>;
  /** Dense candidate number of each row (0 ≤ n < 2^30). */
  candidates: ArrayLike<number>;
  /** Anchor time of each row in its own file, seconds. */
  times: ArrayLike<number>;
  count: number;
}

/** Distinct hashes of a fingerprint, ascending: the `hash = ANY(...)` list of a SQL lookup. */
export function distinctHashes(fp: Fingerprint): Uint32Array {
  const sorted = fp.hashes.slice().sort();
  let n = 0;
  for (let i = 0; i < sorted.length; i++) if (i === 0 || sorted[i] !== sorted[i - 1]) sorted[n++] = sorted[i];
  return sorted.slice(0, n);
}

/** Joins index rows with the query's own (hash, time) entries, then scores the offsets. */
export function scorePostings(query: Fingerprint, postings: Postings, options?: ScoreOptions): CandidateScore[] {
  assertFingerprintShape(query, "query");
  const qn = query.hashes.length;
  const order = new Uint32Array(qn);
  for (let i = 0; i < qn; i++) order[i] = i;
  const qh = query.hashes;
  order.sort((a, b) => qh[a] - qh[b] || a - b);
  const sortedHashes = new Uint32Array(qn);
  for (let i = 0; i < qn; i++) sortedHashes[i] = qh[order[i]];

  let capacity = Math.max(1024, postings.count);
  let candidates = new Uint32Array(capacity);
  let offsets = new Float64Array(capacity);
  let n = 0;
  for (let r = 0; r < postings.count; r++) {
    const h = postings.hashes[r];
    // Lower bound of h in the query's sorted hashes.
    let lo = 0;
    let hi = qn;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (sortedHashes[mid] < h) lo = mid + 1;
      else hi = mid;
    }
    for (let q = lo; q < qn && sortedHashes[q] === h; q++) {
      if (n === capacity) {
        capacity *= 2;
        const c = new Uint32Array(capacity);
        c.set(candidates);
        candidates = c;
        const o = new Float64Array(capacity);
        o.set(offsets);
        offsets = o;
      }
      candidates[n] = postings.candidates[r];
      offsets[n] = postings.times[r] - query.times[order[q]];
      n++;
    }
  }
  return scoreOffsetHits({ candidates, offsetsSeconds: offsets, count: n }, options);
}

/**
 * How well `reference` contains `query`: the offset-histogram score and where the query's t = 0
 * falls in the reference (null when they share no aligned hash).
 */
export function scoreMatch(query: Fingerprint, reference: Fingerprint): { score: number; offsetSeconds: number | null } {
  assertFingerprintShape(reference, "reference");
  if (query.version !== reference.version) {
    throw new RangeError(`fingerprint versions differ (${query.version} vs ${reference.version}): re-scan one of the files`);
  }
  const rows = reference.hashes.length;
  const best = scorePostings(
    query,
    { hashes: reference.hashes, candidates: new Uint32Array(rows), times: reference.times, count: rows },
    { minScore: 1 },
  );
  return best.length === 0 ? { score: 0, offsetSeconds: null } : { score: best[0].score, offsetSeconds: best[0].offsetSeconds };
}

export function assertFingerprintShape(fp: Fingerprint, what: string): void {
  if (!(fp.hashes instanceof Uint32Array) || !(fp.times instanceof Float32Array)) {
    throw new TypeError(`${what}: fingerprint needs hashes: Uint32Array and times: Float32Array`);
  }
  if (fp.hashes.length !== fp.times.length) {
    throw new RangeError(`${what}: fingerprint has ${fp.hashes.length} hashes but ${fp.times.length} times`);
  }
  if (!Number.isInteger(fp.version) || fp.version < 1) throw new RangeError(`${what}: bad fingerprint version ${fp.version}`);
}
