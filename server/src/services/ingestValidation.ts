/**
 * Everything an upload must satisfy before anything is stored: the report against the zod contract
 * (422 naming each bad field) and its consistency; the part kinds (PART_KINDS: name, size cap, first
 * bytes), which the streaming multipart reader (middleware/reportUpload.ts) checks while the body
 * arrives; then what only the whole report and part can tell (artefactPartsOf). Text PostgreSQL could not
 * hold is refused by middleware/textGuard.ts.
 */
import { readFile } from "node:fs/promises";
import { excerptMediaTypeOf, PART_NAMES } from "@tidemark/shared/contracts/uploadParts";
import type { ExcerptMediaType } from "@tidemark/shared/types/api";
import { scanReportSchema, type ScanReport } from "@tidemark/shared/types/report";
import type { UploadLimits } from "../context.ts";
import { badRequest, unprocessable } from "../errors.ts";
import { parseWith } from "../validate.ts";
import { pathKey } from "./ingestRows.ts";

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
const INT32_MAX = 2_147_483_647;

function checkConsistency(report: ScanReport): void {
  const seen = new Map<string, number>();
  report.files.forEach((file, i) => {
    // Two names that are not UTF-8 may show the same path; their pathBytes tell them apart.
    const key = pathKey(file.path, file.pathBytes);
    const earlier = seen.get(key);
    if (earlier !== undefined) throw unprocessable(`invalid report: files.${i}.path duplicates files.${earlier}.path ("${file.path}")`);
    seen.set(key, i);
    file.findings.forEach((f, j) => {
      if (f.channel !== null && f.channel > INT32_MAX) throw unprocessable(`invalid report: files.${i}.findings.${j}.channel is too large`);
    });
    // Close-ups point into this file's findings by index; the portal maps them to finding ids.
    const findingCount = file.findings.length;
    (file.closeups ?? []).forEach((c, k) => {
      const bad = c.findings.find((n) => n >= findingCount);
      if (bad !== undefined) throw unprocessable(`invalid report: files.${i}.closeups.${k}.findings has ${bad}, but the file has ${findingCount} finding(s)`);
      if (!(c.endSeconds > c.startSeconds)) throw unprocessable(`invalid report: files.${i}.closeups.${k} ends at ${c.endSeconds} s, not after its start ${c.startSeconds} s`);
      if ((c.excerpt === null) !== (c.excerptMediaType === null)) throw unprocessable(`invalid report: files.${i}.closeups.${k} needs excerpt and excerptMediaType both set or both null`);
    });
    (file.closeupsOmitted ?? []).forEach((o, k) => {
      if (o.finding >= findingCount) throw unprocessable(`invalid report: files.${i}.closeupsOmitted.${k}.finding is ${o.finding}, but the file has ${findingCount} finding(s)`);
    });
  });
  if (report.summary.files !== report.files.length) {
    throw unprocessable(`invalid report: summary.files is ${report.summary.files} but files has ${report.files.length} entries`);
  }
}

/** The parsed report part against the contract (422 naming each bad field) and its own consistency. */
export function validateReport(json: unknown): ScanReport {
  const report = parseWith(scanReportSchema, json, "report", (message, details) => unprocessable(message, "invalid_report", details));
  checkConsistency(report);
  return report;
}

// PNG (ISO/IEC 15948 §5.2): the 8-byte signature.
export const isPng = (b: Buffer): boolean => b.subarray(0, 8).equals(PNG_SIGNATURE);
// FLAC (RFC 9639): a stream starts with the marker "fLaC".
const isFlac = (b: Buffer): boolean => b.toString("latin1", 0, 4) === "fLaC";
// RIFF WAVE (Microsoft/IBM Multimedia Programming Interface and Data Specifications 1.0): "RIFF", a 32-bit size, "WAVE".
const isWav = (b: Buffer): boolean => b.length >= 12 && b.toString("latin1", 0, 4) === "RIFF" && b.toString("latin1", 8, 12) === "WAVE";
// JSON (RFC 8259 §2): our documents are objects, so after optional whitespace the first byte is "{".
export const isJsonObject = (b: Buffer): boolean => b.toString("latin1").trimStart().startsWith("{");

/**
 * Every artefact part an upload may carry, in one table: how it is named (n = the file's index in
 * report.files, k = the close-up's index in that file's closeups), its size cap (AppSettings.upload) and
 * what its first bytes must be (415 otherwise). What the report must say about a part, and a JSON part's
 * `schema`, are checked afterwards by artefactPartsOf().
 */
export const PART_KINDS = {
  spectrogram: { name: PART_NAMES.spectrogram.pattern, shape: PART_NAMES.spectrogram.shape, maxBytes: (l: UploadLimits) => l.maxImageBytes, type: "a PNG image", magic: isPng },
  waveform: { name: PART_NAMES.waveform.pattern, shape: PART_NAMES.waveform.shape, maxBytes: (l: UploadLimits) => l.maxImageBytes, type: "a PNG image", magic: isPng },
  levelGrid: { name: PART_NAMES.levelGrid.pattern, shape: PART_NAMES.levelGrid.shape, maxBytes: (l: UploadLimits) => l.maxJsonPartBytes, type: "a JSON object", magic: isJsonObject },
  loudnessCurve: { name: PART_NAMES.loudnessCurve.pattern, shape: PART_NAMES.loudnessCurve.shape, maxBytes: (l: UploadLimits) => l.maxJsonPartBytes, type: "a JSON object", magic: isJsonObject },
  closeupSpectrogram: { name: PART_NAMES.closeupSpectrogram.pattern, shape: PART_NAMES.closeupSpectrogram.shape, maxBytes: (l: UploadLimits) => l.maxImageBytes, type: "a PNG image", magic: isPng },
  closeupWaveform: { name: PART_NAMES.closeupWaveform.pattern, shape: PART_NAMES.closeupWaveform.shape, maxBytes: (l: UploadLimits) => l.maxImageBytes, type: "a PNG image", magic: isPng },
  excerpt: {
    name: PART_NAMES.excerpt.pattern,
    shape: PART_NAMES.excerpt.shape,
    maxBytes: (l: UploadLimits) => l.maxExcerptBytes,
    type: "FLAC or WAV audio matching its extension",
    magic: (b: Buffer, name: string) => (excerptMediaTypeOf(name) === "audio/flac" ? isFlac(b) : isWav(b)),
  },
} as const satisfies Record<string, { name: RegExp; shape: string; maxBytes: (l: UploadLimits) => number; type: string; magic: (head: Buffer, name: string) => boolean }>;

export type PartKind = keyof typeof PART_KINDS;
export const PART_KIND_NAMES = Object.keys(PART_KINDS) as PartKind[];

/** Bytes of a part the magic checks look at (the longest signature is 12). */
export const MAGIC_HEAD_BYTES = 16;

/** Kinds sent once per close-up (`<n>.<k>…`) rather than once per file. */
export const isCloseupKind = (kind: PartKind): boolean => PART_KINDS[kind].shape.includes("<k>");

/** A part whose name, indexes, size and first bytes were checked: what the multipart reader leaves. */
export interface NamedPart {
  kind: string;
  fileIndex: number;
  closeupIndex: number | null;
  originalname: string;
  /** The temporary file; removed when the response closes. */
  path: string;
}

export interface ReceivedPart extends NamedPart {
  size: number;
}

export interface ArtefactPart {
  kind: PartKind;
  fileIndex: number;
  /** The close-up's index for closeup parts and excerpts, else null. */
  closeupIndex: number | null;
  /** For excerpts: "audio/flac" or "audio/wav", from the name (checked against the bytes and the report). */
  mediaType: ExcerptMediaType | null;
  path: string;
}

const JSON_SCHEMAS: Partial<Record<PartKind, string>> = { levelGrid: "tidemark.level-grid/1", loudnessCurve: "tidemark.loudness-curve/1" };

/** JSON artefacts carry their own schema id (CONTRACT-16 §2 and §3). */
async function jsonSchemaProblem(file: string, schema: string): Promise<string | null> {
  let json: unknown;
  try {
    json = JSON.parse(await readFile(file, "utf8"));
  } catch {
    return "is not valid JSON";
  }
  const got = json && typeof json === "object" && !Array.isArray(json) ? (json as { schema?: unknown }).schema : undefined;
  return got === schema ? null : `has schema ${JSON.stringify(got ?? null)}, expected "${schema}"`;
}

/** What the report must declare for a part to be expected: a close-up part needs its close-up, etc. */
function declared(report: ScanReport, part: ArtefactPart, label: string): void {
  const file = report.files[part.fileIndex];
  if (!file) throw badRequest(`${label}: the report has no file ${part.fileIndex} (it has ${report.files.length})`, "unknown_file_index");
  if (part.kind === "levelGrid" || part.kind === "loudnessCurve") {
    if (!file[part.kind]) throw badRequest(`${label}: file ${part.fileIndex} of the report has no ${part.kind}`, "unexpected_part");
    return;
  }
  if (part.closeupIndex === null) return;
  const closeups = file.closeups ?? [];
  const closeup = closeups[part.closeupIndex];
  if (!closeup) throw badRequest(`${label}: file ${part.fileIndex} of the report has no close-up ${part.closeupIndex} (it has ${closeups.length})`, "unknown_closeup_index");
  if (part.kind === "excerpt") {
    if (!closeup.excerpt) throw badRequest(`${label}: close-up ${part.closeupIndex} of file ${part.fileIndex} has no excerpt in the report`, "unexpected_part");
    if (closeup.excerptMediaType !== part.mediaType) {
      throw badRequest(`${label}: the report says the excerpt is ${closeup.excerptMediaType ?? "null"}, the part is named for ${part.mediaType}`, "excerpt_type_mismatch");
    }
  }
}

/**
 * Checked parts → what ingest stores, after the checks that need the report or the whole part: the report
 * names the artefact (its grid, curve, close-up k, an excerpt of the type named), and a JSON part has the
 * right `schema` (400 `bad_json`).
 */
export async function artefactPartsOf(parts: NamedPart[], report: ScanReport): Promise<ArtefactPart[]> {
  const out: ArtefactPart[] = [];
  for (const part of parts) {
    if (!Object.hasOwn(PART_KINDS, part.kind)) throw badRequest(`unexpected file part "${part.kind}"; expected report, ${PART_KIND_NAMES.join(", ")}`, "bad_upload");
    const kind = part.kind as PartKind;
    const label = `${kind} ${JSON.stringify(part.originalname)}`;
    const mediaType = kind === "excerpt" ? excerptMediaTypeOf(part.originalname) : null;
    const artefact: ArtefactPart = { kind, fileIndex: part.fileIndex, closeupIndex: part.closeupIndex, mediaType, path: part.path };
    declared(report, artefact, label);
    const schema = JSON_SCHEMAS[kind];
    const problem = schema ? await jsonSchemaProblem(part.path, schema) : null;
    if (problem) throw badRequest(`${label} ${problem}`, "bad_json");
    out.push(artefact);
  }
  return out;
}
