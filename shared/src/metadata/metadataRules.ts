/**
 * A profile's embedded-metadata rules, as one pure function: presence of required and recommended bext /
 * INFO / iXML fields, the formats EBU Tech 3285 and SMPTE 330M fix, a bext version that fits the fields used,
 * version-2 loudness fields that agree with what was measured, and a CodingHistory (EBU R 98) whose last row
 * describes the file as it is. Used by judge(), so the CLI and the distributed workers rule alike.
 */
import type { AudioFormat, BextMetadata, FileMetadata, FileMetrics, Finding, FindingCode, Severity } from "../types/report.ts";
import { modesForChannels, parseCodingHistory } from "./codingHistory.ts";
import { hasMetadataField, type MetadataFieldName } from "./metadataFields.ts";

export interface MetadataRules {
  required: MetadataFieldName[];
  recommended: MetadataFieldName[];
  /** Check OriginationDate/Time, UMID and the bext version against the fields used. */
  formats: boolean;
  /** Check the last CodingHistory row against the file's rate, word length and mode. */
  codingHistory: boolean;
  /** Largest accepted gap between a bext v2 loudness field and the measured value (LU or dB); null: no check. */
  loudnessToleranceLu: number | null;
}

/** Severities when the profile's severity map names none for the code. */
export const METADATA_DEFAULT_SEVERITIES: Record<
  "metadata-missing" | "metadata-recommended-missing" | "metadata-format" | "bext-version-mismatch" | "coding-history-mismatch" | "bext-loudness-mismatch",
  Severity
> = {
  "metadata-missing": "fail",
  "metadata-recommended-missing": "info",
  "metadata-format": "warn",
  "bext-version-mismatch": "warn",
  "coding-history-mismatch": "warn",
  "bext-loudness-mismatch": "warn",
};

export const METADATA_CODES = Object.keys(METADATA_DEFAULT_SEVERITIES) as FindingCode[];

export interface MetadataRuleInput {
  format: AudioFormat | null;
  metadata: FileMetadata;
  metrics: FileMetrics | null;
}

type Draft = { code: keyof typeof METADATA_DEFAULT_SEVERITIES; message: string };

/**
 * EBU Tech 3285, 2.3: OriginationDate `yyyy-mm-dd`. The spec tolerates other separators (_ : space .,
 * from memory); we hold to the hyphen it recommends, so `2024:03:18` is reported.
 */
const DATE_PATTERN = /^(\d{4})-(\d{2})-(\d{2})$/;
/** EBU Tech 3285, 2.3: OriginationTime `hh:mm:ss`. */
const TIME_PATTERN = /^(\d{2}):(\d{2}):(\d{2})$/;

function validDate(text: string): boolean {
  const m = DATE_PATTERN.exec(text);
  if (!m) return false;
  const [y, mo, d] = [Number(m[1]), Number(m[2]), Number(m[3])];
  const date = new Date(Date.UTC(y, mo - 1, d));
  return date.getUTCFullYear() === y && date.getUTCMonth() === mo - 1 && date.getUTCDate() === d;
}

function validTime(text: string): boolean {
  const m = TIME_PATTERN.exec(text);
  return m !== null && Number(m[1]) < 24 && Number(m[2]) < 60 && Number(m[3]) < 60;
}

/**
 * SMPTE 330M: a UMID starts with the 12-byte SMPTE universal label (prefix 06 0A 2B 34, from memory),
 * then a length byte: 0x13 for a basic UMID (32 bytes), 0x33 for an extended one (64 bytes) (from memory).
 */
function umidProblem(hex: string): string | null {
  const bytes = hex.length / 2;
  if (bytes !== 32 && bytes !== 64) return `UMID is ${bytes} bytes, expected 32 (basic) or 64 (extended) (SMPTE 330M)`;
  if (!hex.startsWith("060a2b34")) return `UMID does not start with the SMPTE universal label 06 0A 2B 34 (SMPTE 330M)`;
  const length = parseInt(hex.slice(24, 26), 16);
  const expected = bytes === 32 ? 0x13 : 0x33;
  if (length !== expected) {
    return `UMID length byte is 0x${length.toString(16).padStart(2, "0")} but ${bytes} bytes are used; a ${bytes === 32 ? "basic" : "extended"} UMID has 0x${expected.toString(16)} (SMPTE 330M)`;
  }
  return null;
}

function formatFindings(b: BextMetadata): Draft[] {
  const out: Draft[] = [];
  if (b.originationDate.trim() !== "" && !validDate(b.originationDate)) {
    out.push({ code: "metadata-format", message: `bext OriginationDate "${b.originationDate}" is not a date as yyyy-mm-dd (EBU Tech 3285)` });
  }
  if (b.originationTime.trim() !== "" && !validTime(b.originationTime)) {
    out.push({ code: "metadata-format", message: `bext OriginationTime "${b.originationTime}" is not a time as hh:mm:ss (EBU Tech 3285)` });
  }
  if (b.umid !== null) {
    const problem = umidProblem(b.umid);
    if (problem) out.push({ code: "metadata-format", message: problem });
  }
  // EBU Tech 3285: version 1 added the UMID, version 2 the loudness fields; versions above 2 are not defined.
  if (b.version > 2) out.push({ code: "bext-version-mismatch", message: `bext version ${b.version} is not defined (EBU Tech 3285 knows 0, 1 and 2)` });
  if (b.version < 1 && b.umid !== null) out.push({ code: "bext-version-mismatch", message: `bext version ${b.version} but a UMID is set; the UMID needs version 1 or later (EBU Tech 3285)` });
  const loudnessUsed = b.loudness !== undefined && Object.values(b.loudness).some((v) => v !== null && v !== 0);
  if (b.version < 2 && loudnessUsed) {
    out.push({ code: "bext-version-mismatch", message: `bext version ${b.version} but loudness fields are set; they need version 2 (EBU Tech 3285 v2)` });
  }
  return out;
}

const LOUDNESS_PAIRS = [
  ["loudnessValue", "LoudnessValue", "integratedLufs", "LUFS"],
  ["loudnessRange", "LoudnessRange", "loudnessRangeLu", "LU"],
  ["maxTruePeakLevel", "MaxTruePeakLevel", "truePeakDbtp", "dBTP"],
  ["maxMomentaryLoudness", "MaxMomentaryLoudness", "maxMomentaryLufs", "LUFS"],
  ["maxShortTermLoudness", "MaxShortTermLoudness", "maxShortTermLufs", "LUFS"],
] as const;

function loudnessFindings(b: BextMetadata, metrics: FileMetrics, toleranceLu: number): Draft[] {
  if (b.version < 2 || !b.loudness) return [];
  const out: Draft[] = [];
  for (const [key, name, metric, unit] of LOUDNESS_PAIRS) {
    const written = b.loudness[key];
    const measured = metrics[metric];
    if (written === null || measured === null) continue;
    const gap = Math.abs(written - measured);
    // Values are stored ×100 as integers: half a step of rounding is never a mismatch.
    if (gap > toleranceLu + 0.005) {
      out.push({
        code: "bext-loudness-mismatch",
        message: `bext ${name} ${written.toFixed(2)} ${unit} but ${measured.toFixed(2)} ${unit} measured (tolerance ${toleranceLu} ${unit === "dBTP" ? "dB" : "LU"}, EBU Tech 3285 v2)`,
      });
    }
  }
  return out;
}

function codingHistoryFindings(history: string, format: AudioFormat): Draft[] {
  const rows = parseCodingHistory(history);
  const last = rows.at(-1);
  if (!last) return [];
  const problems: string[] = [];
  if (last.sampleRateHz !== null && last.sampleRateHz !== format.sampleRateHz) problems.push(`F=${last.sampleRateHz} but the file is ${format.sampleRateHz} Hz`);
  if (last.wordLengthBits !== null && last.wordLengthBits !== format.bitDepth) problems.push(`W=${last.wordLengthBits} but the file is ${format.bitDepth}-bit`);
  if (last.mode !== null && !modesForChannels(format.channels).includes(last.mode)) {
    problems.push(`M=${last.mode} but the file has ${format.channels} channel${format.channels === 1 ? "" : "s"}`);
  }
  const missing = [last.sampleRateHz === null ? "F=" : null, last.wordLengthBits === null ? "W=" : null, last.mode === null ? "M=" : null].filter((x) => x !== null);
  if (missing.length > 0) problems.push(`it gives no ${missing.join(", ")}`);
  if (problems.length === 0) return [];
  return [{ code: "coding-history-mismatch", message: `last CodingHistory row "${last.raw}" does not describe this file: ${problems.join("; ")} (EBU R 98)` }];
}

function missingFindings(metadata: FileMetadata, fields: readonly MetadataFieldName[], code: Draft["code"], what: string): Draft[] {
  const missing = fields.filter((f) => !hasMetadataField(metadata, f));
  return missing.length === 0 ? [] : [{ code, message: `${what} metadata missing or empty: ${missing.join(", ")}` }];
}

const RIFF_CONTAINERS: ReadonlySet<string> = new Set(["wav", "bwf", "rf64"]);

/** The metadata findings for one file; `severityOf` gives each code's severity, or "off" to drop it. */
export function metadataFindings(
  rules: MetadataRules,
  input: MetadataRuleInput,
  severityOf: (code: FindingCode) => Severity | "off" | undefined,
): Finding[] {
  // The bext and LIST/INFO fields exist only in RIFF files: a FLAC or AIFF master cannot carry them, so
  // their absence there says nothing (its own text chunks or Vorbis comments land in metadata.text).
  const riff = input.format === null || RIFF_CONTAINERS.has(input.format.container);
  const drafts: Draft[] = riff
    ? [
        ...missingFindings(input.metadata, rules.required, "metadata-missing", "required"),
        ...missingFindings(input.metadata, rules.recommended, "metadata-recommended-missing", "recommended"),
      ]
    : [];
  const b = input.metadata.bext;
  if (b) {
    if (rules.formats) drafts.push(...formatFindings(b));
    if (rules.loudnessToleranceLu !== null && input.metrics) drafts.push(...loudnessFindings(b, input.metrics, rules.loudnessToleranceLu));
    if (rules.codingHistory && input.format) drafts.push(...codingHistoryFindings(b.codingHistory, input.format));
  }
  const out: Finding[] = [];
  for (const d of drafts) {
    const severity = severityOf(d.code) ?? METADATA_DEFAULT_SEVERITIES[d.code];
    if (severity === "off") continue;
    out.push({ code: d.code, severity, channel: null, startSeconds: null, endSeconds: null, message: d.message });
  }
  return out;
}
