/**
 * When an offset-histogram candidate counts as the same recording, for every caller (the CLI's
 * `match`, the server's ingest and lookup), so they agree.
 *
 * Two rules. The score must clear DEFAULT_MIN_SCORE, above which chance collisions do not reach.
 * And it must be a real share of the shorter file's hashes: a 5 s station ident at the head of two
 * unrelated 10 min programmes scores ~40, well above chance, but is under 1 % of either (and less on
 * longer tapes), while a copy keeps far more: trimmed by 10 s (hop grid shifted) or noisy, lossy and
 * resampled, 45–100 % on the synthesised programmes of tests/shared/fingerprint{Match,MatchPolicy}.test.ts.
 * 2 % leaves a wide margin below those, at the price that two transfers overlapping by under ~2 % of
 * the shorter one (or sharing only an ident in files under ~4 min) are not told apart by this rule.
 */
import { DEFAULT_MIN_SCORE } from "./offsetHistogram.ts";

export const MIN_SHARED_FRACTION = 0.02;

export function isSameRecording(score: number, queryHashes: number, candidateHashes: number, minScore = DEFAULT_MIN_SCORE): boolean {
  return score >= minScore && score >= MIN_SHARED_FRACTION * Math.min(queryHashes, candidateHashes);
}
