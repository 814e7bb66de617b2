/**
 * The three built-in profiles, as documented in README.md › Profiles, with the practice they come from.
 * `sources` is shown to users (`tidemark profiles NAME`, reports): it cites documents and the README, and
 * carries no "from memory" marks; those stay in the comments beside the values.
 * Findings a profile does not name keep the severity the analysers gave them.
 *
 * They are written in their parsed form (every default spelt out), so a scan uses them as they are and
 * never loads zod for them (issue #22: building the schemas was a tenth of a one-file scan's start-up);
 * tests/shared/profiles.test.ts checks that the profile schema's parse of each changes nothing.
 */
import type { MetadataFieldName } from "../metadata/metadataFields.ts";
import type { Profile } from "./profileSchema.ts";

/** Severities shared by all built-ins, so a verdict never hinges on an analyser's private default. */
const BASE_SEVERITIES: Profile["severities"] = {
  clipping: "fail",
  "near-clip": "warn",
  "lead-silence": "info",
  "tail-silence": "info",
  "silent-gap": "warn",
  "dead-channel": "fail",
  dropout: "fail",
  "digital-silence": "info",
  "stuck-samples": "warn",
  click: "warn",
  "band-limited": "warn",
  upsampled: "warn",
  hum: "warn",
  "polarity-inverted": "fail",
  "dual-mono": "info",
  "channel-imbalance": "warn",
  "padded-bit-depth": "warn",
  truncated: "fail",
  "non-finite-samples": "fail",
  unreadable: "fail",
  "possible-duplicate": "info",
  "fixity-changed": "fail",
  // A vendor's or an earlier transfer's checksum sidecar that the file no longer matches.
  "checksum-mismatch": "fail",
  // A file with no audio, or whose checksum of the audio disagrees, is never a pass (issue #17).
  "no-audio": "fail",
  "trailing-data": "warn",
  "decode-error": "fail",
  "flac-md5-mismatch": "fail",
  "flac-md5-unset": "info",
  "audio-md5-mismatch": "fail",
};

/**
 * The detection rules every built-in states in its sources (so `tidemark profiles` shows them), with the
 * defaults of the settings behind them (shared/src/types/settings.ts). The fade and born-digital margins,
 * the LFE rule and the lossy low-pass range are common practice; the click method is Godsill & Rayner's.
 */
const DETECTION_RULES = [
  "dropout vs digital-silence: a run of digital zero (≥ 1 ms, < 2 s) inside continuous signal is a dropout (fail); in a born-digital file " +
    "(half of its quietest 10 % of 50 ms windows hold digital zero) or where the signal fades into the run (its 5 ms edge 20 dB under the " +
    "signal beside it and 6 dB under the noise floor) it is digital-silence (info)",
  "click: an impulsive disturbance (≤ 5 ms) whose AR(16) prediction residual stands clickThresholdDb (default 40 dB) above the residual's " +
    "robust local level (1.4826 × median absolute residual) and alone within 16 ms either side, per Godsill & Rayner, Digital Audio " +
    "Restoration (1998); default measured at 0 false alarms in 10 min of pink noise and 0 in 10 min of synthesised speech " +
    "(scripts/click-false-alarms.ts)",
  "dead-channel: a silent LFE channel (WAVE_FORMAT_EXTENSIBLE mask, else the default 5.1/7.1 order) is normal and not checked unless " +
    "deadChannelIncludesLfe is true",
  "upsampled: a shelf at 95–101 % of a lower standard rate's Nyquist with an empty band above it; a steeper low-pass from 15 kHz up at " +
    "44.1/48 kHz is band-limited, lossy origin suspected",
];

/**
 * FADGI, "Embedding Metadata in Digital Audio Files: Guideline for Federal Agency Use of Broadcast WAVE Files",
 * version 2 (approved 23 April 2012). Its classification: strongly recommended bext Originator,
 * OriginatorReference, Description, OriginationDate, Version, UMID; recommended TimeReference and INFO IARL;
 * the rest optional. A version 3 (2021) exists; we have not checked whether it reclassifies any field.
 */
export const FADGI_BWF_GUIDELINE = "FADGI Guideline for Federal Agency Use of Broadcast WAVE Files, version 2 (2012)";
const FADGI_STRONGLY_RECOMMENDED: MetadataFieldName[] = ["bext", "bext.Description", "bext.Originator", "bext.OriginatorReference", "bext.OriginationDate", "bext.UMID"];
const FADGI_RECOMMENDED: MetadataFieldName[] = ["bext.TimeReference", "INFO.IARL"];

/** Judge what metadata is there (formats, version, CodingHistory, loudness fields) without demanding any. */
const METADATA_CONSISTENCY: NonNullable<Profile["metadata"]> = { required: [], recommended: [], formats: true, codingHistory: true, loudnessToleranceLu: 0.5 };

// Common practice: |DC| under 0.1 % of full scale is inaudible and harmless; 1 % costs headroom.
const DC_OFFSET_LIMITS = { warn: 0.1, fail: 1 };

const preservationMaster: Profile = {
  name: "preservation-master",
  description:
    "Preservation masters: linear PCM, at least 48 kHz (96 kHz recommended) and 24-bit, no clipping, " +
    "no padded bit depth, small DC offset. No loudness target: masters are not normalised.",
  // IASA TC-04's rates and depths are from memory.
  sources: [
    "IASA TC-04 (2nd ed., 2009): 48 kHz / 24-bit minimum for analogue transfers, 96 kHz recommended",
    "README › Profiles: |DC| < 0.1 % FS warn / 1 % fail (common practice)",
    ...DETECTION_RULES,
    `${FADGI_BWF_GUIDELINE}: its strongly recommended fields are required here, its recommended ones recommended`,
    "EBU Tech 3285 (v2, 2011): OriginationDate yyyy-mm-dd, OriginationTime hh:mm:ss, loudness fields; EBU R 98: CodingHistory; SMPTE 330M: UMID",
    "bext loudness fields may differ from the measured values by 0.5 LU / 0.5 dB (common practice)",
  ],
  format: { encodings: ["pcm"], minSampleRateHz: 48000, minBitDepth: 24 },
  thresholds: { dcOffsetPercent: DC_OFFSET_LIMITS },
  severities: { ...BASE_SEVERITIES, "padded-bit-depth": "fail", upsampled: "fail", "metadata-format": "fail", "coding-history-mismatch": "fail" },
  settings: {},
  metadata: { ...METADATA_CONSISTENCY, required: FADGI_STRONGLY_RECOMMENDED, recommended: FADGI_RECOMMENDED },
};

const accessCopy: Profile = {
  name: "access-copy",
  description: "Access and listening copies: at least 44.1 kHz and 16-bit, true peak at or below −1 dBTP.",
  sources: [
    "Red Book CD audio: 44.1 kHz / 16-bit (common practice)",
    "−1 dBTP leaves headroom for lossy encoding of access copies (common practice)",
    ...DETECTION_RULES,
  ],
  format: { minSampleRateHz: 44100, minBitDepth: 16 },
  thresholds: { truePeakDbtp: { fail: -1 }, dcOffsetPercent: DC_OFFSET_LIMITS },
  // An access copy is often made from a 24-bit master: unused low bits say nothing about it.
  severities: { ...BASE_SEVERITIES, "padded-bit-depth": "info" },
  settings: {},
  metadata: METADATA_CONSISTENCY,
};

const broadcastLoudness: Profile = {
  name: "broadcast-loudness",
  description:
    "Programmes for broadcast: integrated loudness −23 LUFS ± 0.5 LU (warn up to ± 1 LU), true peak at or below −1 dBTP.",
  sources: [
    "EBU R 128 (2020): target −23.0 LUFS, tolerance ± 0.5 LU (± 1 LU where normalisation is not feasible), max true peak −1 dBTP",
    "ITU-R BS.1770-4: integrated loudness and true-peak measurement",
    ...DETECTION_RULES,
  ],
  format: {},
  thresholds: {
    loudness: { targetLufs: -23, warnLu: 0.5, failLu: 1 },
    truePeakDbtp: { fail: -1 },
    dcOffsetPercent: DC_OFFSET_LIMITS,
  },
  // True peak is ruled by the threshold above; a near-clip sample peak says nothing more.
  severities: { ...BASE_SEVERITIES, "near-clip": "info", "padded-bit-depth": "info" },
  settings: {},
  metadata: METADATA_CONSISTENCY,
};

// Each its own copy, as a parse made them: the profiles share lists and limits above.
export const BUILTIN_PROFILES: readonly Profile[] = [preservationMaster, accessCopy, broadcastLoudness].map((p) => structuredClone(p));

export const DEFAULT_PROFILE_NAME = "access-copy";

export function findBuiltinProfile(name: string): Profile | undefined {
  return BUILTIN_PROFILES.find((p) => p.name === name);
}
