/** Data shapes of the spectral fingerprint (issue #11). Plain data over typed arrays. */

/**
 * A file's landmark hashes. `hashes[i]` was anchored at `times[i]` seconds from the file start
 * (non-decreasing). Only fingerprints of the same `version` are comparable.
 */
export interface Fingerprint {
  version: number;
  hashes: Uint32Array;
  times: Float32Array;
  durationSeconds: number;
}

/** One candidate recording found for a query, best first in any list. */
export interface Match {
  id: string;
  /** Hash hits that agree on one time offset (± one analysis hop): the offset-histogram peak. */
  score: number;
  /** Where the query's t = 0 falls in the matched file, seconds (query trimmed by 10 s → +10). */
  offsetSeconds: number;
}
