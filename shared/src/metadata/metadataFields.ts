/**
 * Names of the embedded-metadata fields a profile's metadata rules may demand, and how to read each from a
 * report's `metadata`. Kept free of zod so the portal can show them without the schema library.
 *
 * bext fields carry their EBU Tech 3285 names (v2, 2011); INFO entries are `INFO.` + the RIFF four-character
 * id (Microsoft RIFF specification, 1991), e.g. `INFO.IARL`.
 */
import type { FileMetadata } from "../types/report.ts";

export const BEXT_FIELDS = [
  "bext.Description",
  "bext.Originator",
  "bext.OriginatorReference",
  "bext.OriginationDate",
  "bext.OriginationTime",
  "bext.TimeReference",
  "bext.UMID",
  "bext.CodingHistory",
  "bext.LoudnessValue",
  "bext.LoudnessRange",
  "bext.MaxTruePeakLevel",
  "bext.MaxMomentaryLoudness",
  "bext.MaxShortTermLoudness",
] as const;

/** `bext` alone demands the chunk itself (and so its Version field); `iXML` demands an iXML chunk. */
export const CHUNK_FIELDS = ["bext", "iXML"] as const;

export type BextFieldName = (typeof BEXT_FIELDS)[number];
/** A bext field, a whole chunk, or `INFO.XXXX`. */
export type MetadataFieldName = BextFieldName | (typeof CHUNK_FIELDS)[number] | `INFO.${string}`;

/** RIFF INFO ids are four characters, upper-case letters and digits in practice (RIFF 1991, 3-58). */
export const INFO_FIELD_PATTERN = /^INFO\.[A-Z0-9]{4}$/;

export function isMetadataFieldName(name: string): name is MetadataFieldName {
  return (BEXT_FIELDS as readonly string[]).includes(name) || (CHUNK_FIELDS as readonly string[]).includes(name) || INFO_FIELD_PATTERN.test(name);
}

/** Whether the field is present and not empty. A TimeReference of 0 counts as set: midnight is a valid start. */
export function hasMetadataField(metadata: FileMetadata, field: MetadataFieldName): boolean {
  if (field === "bext") return metadata.bext !== undefined;
  if (field === "iXML") return (metadata.ixml ?? "").trim() !== "";
  if (field.startsWith("INFO.")) return (metadata.info?.[field.slice(5)] ?? "").trim() !== "";
  const b = metadata.bext;
  if (!b) return false;
  const l = b.loudness;
  switch (field as BextFieldName) {
    case "bext.Description":
      return b.description.trim() !== "";
    case "bext.Originator":
      return b.originator.trim() !== "";
    case "bext.OriginatorReference":
      return b.originatorReference.trim() !== "";
    case "bext.OriginationDate":
      return b.originationDate.trim() !== "";
    case "bext.OriginationTime":
      return b.originationTime.trim() !== "";
    case "bext.TimeReference":
      return true;
    case "bext.UMID":
      return b.umid !== null;
    case "bext.CodingHistory":
      return b.codingHistory.trim() !== "";
    case "bext.LoudnessValue":
      return l?.loudnessValue != null;
    case "bext.LoudnessRange":
      return l?.loudnessRange != null;
    case "bext.MaxTruePeakLevel":
      return l?.maxTruePeakLevel != null;
    case "bext.MaxMomentaryLoudness":
      return l?.maxMomentaryLoudness != null;
    case "bext.MaxShortTermLoudness":
      return l?.maxShortTermLoudness != null;
  }
  return false;
}
