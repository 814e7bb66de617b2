/**
 * The shape of a judging profile, as one zod schema: built-ins are written in it and custom profile JSON
 * files are validated by it. Objects are strict so a misspelt field is an error that names it, not a
 * silently ignored setting.
 */
import { z } from "zod";
import { CONTAINERS, ENCODINGS, FINDING_CODES, SEVERITIES } from "../types/codes.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { isMetadataFieldName, type MetadataFieldName } from "../metadata/metadataFields.ts";

/** A severity for a finding code, or "off" to drop that finding. */
export const PROFILE_SEVERITIES = [...SEVERITIES, "off"] as const;
export type ProfileSeverity = (typeof PROFILE_SEVERITIES)[number];

/** Upper limits: a measured value above `warn` warns, above `fail` fails (the limit itself passes). */
export const limitSchema = z
  .strictObject({ warn: z.number().optional(), fail: z.number().optional() })
  .refine((l) => l.warn === undefined || l.fail === undefined || l.warn <= l.fail, {
    message: "warn must not be above fail",
  });

export const loudnessTargetSchema = z
  .strictObject({
    targetLufs: z.number().min(-70).max(0),
    /** Deviation from the target (either way) above which the file warns, LU. */
    warnLu: z.number().min(0).optional(),
    failLu: z.number().min(0).optional(),
  })
  .refine((l) => l.warnLu === undefined || l.failLu === undefined || l.warnLu <= l.failLu, {
    message: "warnLu must not be above failLu",
  });

const positiveInts = z.array(z.number().int().positive()).min(1);

export const formatDemandsSchema = z.strictObject({
  encodings: z.array(z.enum(ENCODINGS)).min(1).optional(),
  containers: z.array(z.enum(CONTAINERS)).min(1).optional(),
  /** Exactly these rates (when given). */
  sampleRatesHz: positiveInts.optional(),
  minSampleRateHz: z.number().int().positive().optional(),
  bitDepths: positiveInts.optional(),
  minBitDepth: z.number().int().positive().optional(),
  channels: positiveInts.optional(),
});

export const thresholdsSchema = z.strictObject({
  truePeakDbtp: limitSchema.optional(),
  samplePeakDbfs: limitSchema.optional(),
  dcOffsetPercent: limitSchema.optional(),
  loudness: loudnessTargetSchema.optional(),
});

const isPowerOfTwo = (n: number): boolean => Number.isInteger(n) && n > 0 && (n & (n - 1)) === 0;

/** Every analysis setting may be overridden; nested spectrogram settings merge field by field. */
export const settingsOverrideSchema = z.strictObject({
  clipRunSamples: z.number().int().min(1).max(1000).optional(),
  clipToleranceDb: z.number().min(0).max(6).optional(),
  nearClipDbfs: z.number().max(0).optional(),
  silenceThresholdDbfs: z.number().max(0).optional(),
  silenceMinSeconds: z.number().positive().optional(),
  dropoutMinSeconds: z.number().positive().optional(),
  deadChannelIncludesLfe: z.boolean().optional(),
  clickThresholdDb: z.number().min(6).max(80).optional(),
  stuckMinSamples: z.number().int().min(2).optional(),
  imbalanceDb: z.number().positive().optional(),
  dualMonoCorrelation: z.number().min(-1).max(1).optional(),
  polarityInvertedCorrelation: z.number().min(-1).max(1).optional(),
  fftSize: z
    .number()
    .int()
    .min(256)
    .max(65536)
    .refine(isPowerOfTwo, { message: "fftSize must be a power of two" })
    .nullable()
    .optional(),
  hopSize: z.number().int().min(1).nullable().optional(),
  bandwidthThresholdDb: z.number().positive().optional(),
  humProminenceDb: z.number().positive().optional(),
  spectrogram: z
    .strictObject({
      width: z.number().int().min(64).max(8192).optional(),
      height: z.number().int().min(64).max(4096).optional(),
      frequencyScale: z.enum(["log", "linear"]).optional(),
      aggregate: z.enum(["max", "mean"]).optional(),
      perChannel: z.boolean().optional(),
    })
    .optional(),
  closeups: z
    .strictObject({
      cap: z.number().int().min(0).max(1000).optional(),
      beforeSeconds: z.number().min(0).max(30).optional(),
      afterSeconds: z.number().min(0).max(30).optional(),
      maxSeconds: z.number().min(0.1).max(30).optional(),
      budgetBytes: z.number().int().min(0).max(2_000_000_000).optional(),
    })
    .optional(),
});

const metadataFieldSchema = z
  .string()
  .refine(isMetadataFieldName, {
    message: "expected a bext field (e.g. bext.Originator), bext, iXML or INFO.XXXX (four upper-case letters or digits)",
  })
  .transform((s) => s as MetadataFieldName);

/** Embedded-metadata rules (shared/src/metadata/metadataRules.ts); absent: metadata is not judged. */
export const metadataRulesSchema = z
  .strictObject({
    required: z.array(metadataFieldSchema).default([]),
    recommended: z.array(metadataFieldSchema).default([]),
    formats: z.boolean().default(true),
    codingHistory: z.boolean().default(true),
    loudnessToleranceLu: z.number().min(0).max(10).nullable().default(0.5),
  })
  .superRefine((rules, ctx) => {
    rules.recommended.forEach((f, i) => {
      if (rules.required.includes(f)) ctx.addIssue({ code: "custom", path: ["recommended", i], message: `${f} is already required` });
    });
  });

export const profileSchema = z.strictObject({
  /** Lets editors find the schema; ignored otherwise. */
  $schema: z.string().optional(),
  name: z
    .string()
    .regex(/^[a-z0-9][a-z0-9-]{0,63}$/, { message: "name must be lower-case letters, digits and hyphens (≤ 64)" }),
  description: z.string().max(2000).default(""),
  /** Where the demands and thresholds come from (standards, house rules). */
  sources: z.array(z.string().max(500)).default([]),
  format: formatDemandsSchema.default({}),
  thresholds: thresholdsSchema.default({}),
  severities: z.partialRecord(z.enum(FINDING_CODES), z.enum(PROFILE_SEVERITIES)).default({}),
  settings: settingsOverrideSchema.default({}),
  metadata: metadataRulesSchema.optional(),
});

export type Profile = z.infer<typeof profileSchema>;
export type ProfileInput = z.input<typeof profileSchema>;
export type FormatDemands = z.infer<typeof formatDemandsSchema>;
export type ProfileThresholds = z.infer<typeof thresholdsSchema>;
export type Limit = z.infer<typeof limitSchema>;
export type SettingsOverride = z.infer<typeof settingsOverrideSchema>;
export type ProfileMetadataRules = z.infer<typeof metadataRulesSchema>;

// Compile-time guard: the override schema must not drift from AnalysisSettings.
type MissingOverride = Exclude<keyof AnalysisSettings, keyof SettingsOverride>;
type UnknownOverride = Exclude<keyof SettingsOverride, keyof AnalysisSettings>;
const settingsKeysInSync: [MissingOverride, UnknownOverride] extends [never, never] ? true : never = true;
void settingsKeysInSync;
