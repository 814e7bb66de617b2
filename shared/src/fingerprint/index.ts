/** Spectral fingerprint of a recording, and matching against other fingerprints (issue #11). */
export type { Fingerprint, Match } from "./types.ts";
export {
  canFingerprint,
  createFingerprinter,
  FINGERPRINT_GRID,
  FINGERPRINT_VERSION,
  MAX_FINGERPRINT_HASHES,
  MAX_HASHES_PER_SECOND,
  MAX_SAMPLE_RATE_HZ,
  MIN_SAMPLE_RATE_HZ,
} from "./fingerprinter.ts";
export { decodeFingerprint, encodeFingerprint, FingerprintDecodeError, fingerprintVersionOf } from "./codec.ts";
export {
  DEFAULT_MIN_SCORE,
  distinctHashes,
  OFFSET_BIN_SECONDS,
  scoreMatch,
  scoreOffsetHits,
  scorePostings,
  type CandidateScore,
  type OffsetHits,
  type Postings,
  type ScoreOptions,
} from "./offsetHistogram.ts";
export { createFingerprintIndex, type FingerprintIndex, type LookupOptions } from "./fingerprintIndex.ts";
export { isSameRecording, MIN_SHARED_FRACTION } from "./matchPolicy.ts";
