/**
 * The three built-in profiles, as documented in README.md › Profiles, with the practice they come from.
 * `sources` is shown to users (`tidemark profiles NAME`, reports): it cites documents and the README, and
 * carries no "from memory" marks; those stay in the comments beside the values.
 * Findings a profile does not name keep the severity the analysers gave them.
 */
import { profileSchema, type Profile, type ProfileInput } from "./profileSchema.ts";

/** Severities shared by all built-ins, so a verdict never hinges on an analyser's private default. */
const BASE_SEVERITIES: ProfileInput["severities"] = {
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
};

// Common practice: |DC| under 0.1 % of full scale is inaudible and harmless; 1 % costs headroom.
const DC_OFFSET_LIMITS = { warn: 0.1, fail: 1 };

const preservationMaster: ProfileInput = {
  name: "preservation-master",
  description:
    "Preservation masters: linear PCM, at least 48 kHz (96 kHz recommended) and 24-bit, no clipping, " +
    "no padded bit depth, small DC offset. No loudness target: masters are not normalised.",
  // IASA TC-04's rates and depths are from memory.
  sources: [
    "IASA TC-04 (2nd ed., 2009): 48 kHz / 24-bit minimum for analogue transfers, 96 kHz recommended",
    "README › Profiles: |DC| < 0.1 % FS warn / 1 % fail (common practice)",
  ],
  format: { encodings: ["pcm"], minSampleRateHz: 48000, minBitDepth: 24 },
  thresholds: { dcOffsetPercent: DC_OFFSET_LIMITS },
  severities: { ...BASE_SEVERITIES, "padded-bit-depth": "fail", upsampled: "fail" },
  settings: {},
};

const accessCopy: ProfileInput = {
  name: "access-copy",
  description: "Access and listening copies: at least 44.1 kHz and 16-bit, true peak at or below −1 dBTP.",
  sources: [
    "Red Book CD audio: 44.1 kHz / 16-bit (common practice)",
    "−1 dBTP leaves headroom for lossy encoding of access copies (common practice)",
  ],
  format: { minSampleRateHz: 44100, minBitDepth: 16 },
  thresholds: { truePeakDbtp: { fail: -1 }, dcOffsetPercent: DC_OFFSET_LIMITS },
  // An access copy is often made from a 24-bit master: unused low bits say nothing about it.
  severities: { ...BASE_SEVERITIES, "padded-bit-depth": "info" },
  settings: {},
};

const broadcastLoudness: ProfileInput = {
  name: "broadcast-loudness",
  description:
    "Programmes for broadcast: integrated loudness −23 LUFS ± 0.5 LU (warn up to ± 1 LU), true peak at or below −1 dBTP.",
  sources: [
    "EBU R 128 (2020): target −23.0 LUFS, tolerance ± 0.5 LU (± 1 LU where normalisation is not feasible), max true peak −1 dBTP",
    "ITU-R BS.1770-4: integrated loudness and true-peak measurement",
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
};

export const BUILTIN_PROFILES: readonly Profile[] = [preservationMaster, accessCopy, broadcastLoudness].map((p) =>
  profileSchema.parse(p),
);

export const DEFAULT_PROFILE_NAME = "access-copy";

export function findBuiltinProfile(name: string): Profile | undefined {
  return BUILTIN_PROFILES.find((p) => p.name === name);
}
