/**
 * The report contract of `tidemark scan --format json` ("tidemark.report/2", and still "tidemark.report/1"), as one zod schema.
 * CLI, server (ingest validation) and portal read the types inferred here; the shipped JSON Schema
 * (shared/schema/report.schema.json) is generated from it. Change it only through an issue.
 * Quiet values (−Infinity dB) are written as null, hence the nullable dB fields.
 */
import { z } from "zod";
import { CONTAINERS, ENCODINGS, EXCERPT_MEDIA_TYPES, FINDING_CODES, REPORT_SCHEMA_IDS, SEVERITIES, VERDICTS } from "./codes.ts";

export { CONTAINERS, ENCODINGS, FINDING_CODES, REPORT_SCHEMA_ID, REPORT_SCHEMA_IDS, SEVERITIES, VERDICTS } from "./codes.ts";
export type { FindingCode, Severity, Verdict } from "./codes.ts";

const db = z.number().nullable();

export const findingSchema = z.object({
  code: z.enum(FINDING_CODES),
  severity: z.enum(SEVERITIES),
  /** 0-based channel index, or null when the finding concerns the whole file. */
  channel: z.number().int().min(0).nullable(),
  startSeconds: z.number().min(0).nullable(),
  endSeconds: z.number().min(0).nullable(),
  message: z.string().max(2000),
});

export const audioFormatSchema = z.object({
  container: z.enum(CONTAINERS),
  encoding: z.enum(ENCODINGS),
  sampleRateHz: z.number().int().positive(),
  bitDepth: z.number().int().positive(),
  channels: z.number().int().positive(),
  durationSeconds: z.number().min(0),
});

/** BWF `bext` chunk fields (EBU Tech 3285). */
export const bextSchema = z.object({
  description: z.string(),
  originator: z.string(),
  originatorReference: z.string(),
  originationDate: z.string(),
  originationTime: z.string(),
  timeReference: z.number(),
  version: z.number().int(),
  umid: z.string().nullable(),
  codingHistory: z.string(),
  /**
   * Loudness fields of a version-2 bext (EBU Tech 3285 v2, 2011), in LUFS / LU / dBTP; null where the writer
   * marked a value as not computed (0x7FFF). Absent when the chunk is shorter or the bytes are unused.
   */
  loudness: z
    .object({
      loudnessValue: z.number().nullable(),
      loudnessRange: z.number().nullable(),
      maxTruePeakLevel: z.number().nullable(),
      maxMomentaryLoudness: z.number().nullable(),
      maxShortTermLoudness: z.number().nullable(),
    })
    .optional(),
});

export const fileMetadataSchema = z.object({
  bext: bextSchema.optional(),
  /** RIFF INFO list entries (e.g. INAM, ICMT). */
  info: z.record(z.string(), z.string()).optional(),
  /** iXML text, bounded in size. */
  ixml: z.string().optional(),
  /**
   * Text chunks of AIFF/AIFF-C (NAME, AUTH, `(c) `, ANNO, in file order) and FLAC Vorbis comments
   * (FIELD=value, as written): descriptive text kept as found, bounded in size.
   */
  text: z
    .array(z.object({ key: z.string(), value: z.string() }))
    .max(1024)
    .optional(),
});

export const bandLevelSchema = z.object({ centerHz: z.number().positive(), db });

export const bandEnergiesSchema = z.object({
  octave: z.array(bandLevelSchema),
  third: z.array(bandLevelSchema),
});

export const channelMetricsSchema = z.object({
  samplePeakDbfs: db,
  truePeakDbtp: db,
  rmsDbfs: db,
  dcOffsetPercent: z.number().min(0),
  clippedSamples: z.number().int().min(0),
});

export const fileMetricsSchema = z.object({
  samplePeakDbfs: db,
  truePeakDbtp: db,
  /** Max over channels. */
  rmsDbfs: db,
  integratedLufs: db,
  loudnessRangeLu: z.number().min(0).nullable(),
  maxMomentaryLufs: db,
  maxShortTermLufs: db,
  clippedSamples: z.number().int().min(0),
  clipEvents: z.number().int().min(0),
  /** Largest |DC| over channels, as % of full scale. */
  dcOffsetPercent: z.number().min(0),
  bandwidthHz: z.number().min(0).nullable(),
  dominantFrequencyHz: z.number().min(0).nullable(),
  noiseFloorDbfs: db,
  /** Null for mono. */
  stereoCorrelation: z.number().min(-1).max(1).nullable(),
  /** Null for float files. */
  effectiveBitDepth: z.number().int().min(0).nullable(),
  bands: bandEnergiesSchema,
  channels: z.array(channelMetricsSchema),
});

export const reportErrorSchema = z.object({ code: z.string(), message: z.string() });

/** Longest `fingerprint` text accepted (the fingerprinter's hash cap keeps it below ~12 MB). */
export const MAX_FINGERPRINT_CHARS = 16 * 1024 * 1024;

/** One expected checksum (a sidecar or a --checksums manifest line) and what the file's bytes gave. */
export const checksumCheckSchema = z.object({
  algorithm: z.enum(["md5", "sha1", "sha256", "sha512"]),
  /** Where the expected value was read: "tape.wav.md5", "delivery.sha256:14". */
  source: z.string().max(4096),
  expected: z.string().regex(/^[0-9a-f]+$/),
  actual: z.string().regex(/^[0-9a-f]+$/).nullable(),
  matches: z.boolean(),
});

/**
 * One close-up (issue #16): a window around one or more findings, drawn at ≤ 10 ms a pixel column, with
 * a lossless excerpt of the same samples. Paths follow the same base rules as `spectrogram`.
 */
export const closeupSchema = z.object({
  /** Indexes into this file's findings[]. */
  findings: z.array(z.number().int().min(0)).min(1),
  startSeconds: z.number().min(0),
  endSeconds: z.number().min(0),
  secondsPerColumn: z.number().positive().max(0.01),
  spectrogram: z.string().min(1),
  waveform: z.string().min(1),
  excerpt: z.string().min(1).nullable(),
  excerptMediaType: z.enum(EXCERPT_MEDIA_TYPES).nullable(),
  excerptSampleRateHz: z.number().int().positive().nullable(),
});

export const CLOSEUP_OMISSION_REASONS = ["cap", "budget", "not-timed"] as const;

export const closeupOmittedSchema = z.object({
  finding: z.number().int().min(0),
  reason: z.enum(CLOSEUP_OMISSION_REASONS),
});

export const fileReportSchema = z.object({
  /** As given, relative to the scanned root, with forward slashes; bytes that are not UTF-8 shown as U+FFFD. */
  path: z.string().min(1).max(4096),
  /**
   * The exact bytes of `path`, base64 (RFC 4648), present only when the file name is not valid UTF-8 and `path`
   * is therefore lossy: verify and --resume match files on it. Optional, so earlier reports stay valid.
   */
  pathBytes: z.string().max(8192).regex(/^[A-Za-z0-9+/]*={0,2}$/).optional(),
  sizeBytes: z.number().int().min(0),
  sha256: z.string().regex(/^[0-9a-f]{64}$/).nullable(),
  format: audioFormatSchema.nullable(),
  metadata: fileMetadataSchema,
  metrics: fileMetricsSchema.nullable(),
  findings: z.array(findingSchema),
  verdict: z.enum(VERDICTS),
  error: reportErrorSchema.nullable(),
  /** Path of the spectrogram PNG as written by --spectrograms, or null. */
  spectrogram: z.string().nullable(),
  /**
   * Landmark fingerprint of the audio for duplicate detection (shared/src/fingerprint, issue #11),
   * base64; absent or null when there is none (an unreadable file, a rate outside 8–384 kHz).
   * Optional, so reports written before it stay valid.
   */
  fingerprint: z.string().max(MAX_FINGERPRINT_CHARS).regex(/^[A-Za-z0-9+/]*={0,2}$/).nullable().optional(),
  /** Checksum sidecars and --checksums lines checked against this file; absent when there were none. */
  checksums: z.array(checksumCheckSchema).optional(),
  /** Path of the overview spectrogram's level grid JSON ("tidemark.level-grid/1"); absent in /1 reports and with --no-closeups. */
  levelGrid: z.string().nullable().optional(),
  /** Path of the loudness curve JSON ("tidemark.loudness-curve/1"); absent in /1 reports and with --no-closeups. */
  loudnessCurve: z.string().nullable().optional(),
  closeups: z.array(closeupSchema).optional(),
  /** Findings that got no close-up, and why. */
  closeupsOmitted: z.array(closeupOmittedSchema).optional(),
});

export const reportSummarySchema = z.object({
  files: z.number().int().min(0),
  pass: z.number().int().min(0),
  warn: z.number().int().min(0),
  fail: z.number().int().min(0),
  error: z.number().int().min(0),
});

/** The judging profile's loudness and true-peak limits, for charts (null where the profile sets none). */
export const profileLimitsSchema = z.object({
  integratedLufs: z
    .object({ target: z.number(), warnToleranceLu: z.number().min(0), failToleranceLu: z.number().min(0) })
    .nullable(),
  truePeakMaxDbtp: z.number().nullable(),
});

export const scanReportSchema = z.object({
  schema: z.enum(REPORT_SCHEMA_IDS),
  tool: z.object({ name: z.string(), version: z.string() }),
  profile: z.object({ name: z.string(), hash: z.string().optional(), limits: profileLimitsSchema.optional() }),
  startedAt: z.iso.datetime(),
  finishedAt: z.iso.datetime(),
  summary: reportSummarySchema,
  files: z.array(fileReportSchema),
});

export type Finding = z.infer<typeof findingSchema>;
export type AudioFormat = z.infer<typeof audioFormatSchema>;
export type Container = AudioFormat["container"];
export type Encoding = AudioFormat["encoding"];
export type BextMetadata = z.infer<typeof bextSchema>;
export type FileMetadata = z.infer<typeof fileMetadataSchema>;
export type BandLevel = z.infer<typeof bandLevelSchema>;
export type BandEnergies = z.infer<typeof bandEnergiesSchema>;
export type ChannelMetrics = z.infer<typeof channelMetricsSchema>;
export type FileMetrics = z.infer<typeof fileMetricsSchema>;
export type ReportError = z.infer<typeof reportErrorSchema>;
export type FileReport = z.infer<typeof fileReportSchema>;
export type ChecksumCheck = z.infer<typeof checksumCheckSchema>;
export type ReportSummary = z.infer<typeof reportSummarySchema>;
export type ScanReport = z.infer<typeof scanReportSchema>;
export type Closeup = z.infer<typeof closeupSchema>;
export type CloseupOmitted = z.infer<typeof closeupOmittedSchema>;
export type CloseupOmissionReason = (typeof CLOSEUP_OMISSION_REASONS)[number];
export type ProfileLimits = z.infer<typeof profileLimitsSchema>;
