/**
 * The report's fixed vocabularies, kept free of zod so the portal can import them without bundling
 * the schema library. report.ts builds its schema from these and re-exports them.
 */

/** The id new reports carry. */
export const REPORT_SCHEMA_ID = "tidemark.report/2" as const;
/** Ids a report may carry and still load: /1 lacks the close-up fields and profile limits of /2 (issue #16). */
export const REPORT_SCHEMA_IDS = ["tidemark.report/1", REPORT_SCHEMA_ID] as const;

export const VERDICTS = ["pass", "warn", "fail", "error"] as const;
export const SEVERITIES = ["info", "warn", "fail"] as const;

/** Stable, kebab-case finding codes (messages are free text). */
export const FINDING_CODES = [
  "clipping",
  "near-clip",
  "true-peak-over",
  "dc-offset",
  "lead-silence",
  "tail-silence",
  "silent-gap",
  "dead-channel",
  "dropout",
  "stuck-samples",
  "band-limited",
  "upsampled",
  "hum",
  "polarity-inverted",
  "dual-mono",
  "channel-imbalance",
  "padded-bit-depth",
  "loudness-off-target",
  "format-mismatch",
  "fixity-changed",
  "unreadable",
  "truncated",
  "non-finite-samples",
  "possible-duplicate",
  "checksum-mismatch",
  "click",
  "digital-silence",
  // Embedded-metadata rules of a profile (shared/src/metadata/metadataRules.ts).
  "metadata-missing",
  "metadata-recommended-missing",
  "metadata-format",
  "bext-version-mismatch",
  "coding-history-mismatch",
  "bext-loudness-mismatch",
  "no-audio",
  "trailing-data",
  "decode-error",
  "flac-md5-mismatch",
  "flac-md5-unset",
  "audio-md5-mismatch",
] as const;

/** Containers the readers open: RIFF (wav, bwf, rf64), FLAC, AIFF and AIFF-C. */
export const CONTAINERS = ["wav", "bwf", "rf64", "flac", "aiff", "aifc"] as const;
/** Sample encodings as stored: integer PCM (also what FLAC decodes to), IEEE float, G.711 A-law and µ-law. */
export const ENCODINGS = ["pcm", "float", "alaw", "mulaw"] as const;

export type Verdict = (typeof VERDICTS)[number];
export type Severity = (typeof SEVERITIES)[number];
export type FindingCode = (typeof FINDING_CODES)[number];

/** Media types a close-up's excerpt may have (report `closeups[].excerptMediaType`, upload parts). */
export const EXCERPT_MEDIA_TYPES = ["audio/flac", "audio/wav"] as const;
export type ExcerptMediaType = (typeof EXCERPT_MEDIA_TYPES)[number];
