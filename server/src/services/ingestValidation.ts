/**
 * Everything an upload must satisfy before anything is stored: the report against the zod contract
 * (422 naming each bad field), values PostgreSQL could not hold, and the image parts (400/413).
 */
import { open, readFile } from "node:fs/promises";
import { z } from "zod";
import { scanReportSchema, type ScanReport } from "@tidemark/shared/types/report";
import type { UploadLimits } from "../context.ts";
import { badRequest, HttpError, payloadTooLarge, unprocessable } from "../errors.ts";
import { IMAGE_KINDS, type ImageKind } from "../storage/objectKeys.ts";
import { parseWith } from "../validate.ts";

// No control characters: names are shown in the portal, e-mails and CSV.
const label = (max: number) =>
  z
    .string()
    .trim()
    .min(1)
    .max(max)
    .refine((s) => !/\p{Cc}/u.test(s), "must not contain control characters");

export const ingestFieldsSchema = z.object({ collection: label(200), batchKey: label(200) });

const PNG_MAGIC = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
const INT32_MAX = 2_147_483_647;

export interface UploadedPart {
  fieldname: string;
  originalname: string;
  path: string;
  size: number;
}

export interface ImagePart {
  fileIndex: number;
  kind: ImageKind;
  path: string;
}

/** Where the first NUL is hiding: PostgreSQL text and jsonb cannot store U+0000. */
function findNul(value: unknown, at: string): string | null {
  if (typeof value === "string") return value.includes("\u0000") ? at : null;
  if (Array.isArray(value)) {
    for (let i = 0; i < value.length; i++) {
      const hit = findNul(value[i], at ? `${at}.${i}` : String(i));
      if (hit) return hit;
    }
  } else if (value && typeof value === "object") {
    for (const [k, v] of Object.entries(value)) {
      const hit = findNul(v, at ? `${at}.${k}` : k);
      if (hit) return hit;
    }
  }
  return null;
}

function checkConsistency(report: ScanReport): void {
  const seen = new Map<string, number>();
  report.files.forEach((file, i) => {
    const earlier = seen.get(file.path);
    if (earlier !== undefined) throw unprocessable(`invalid report: files.${i}.path duplicates files.${earlier}.path ("${file.path}")`);
    seen.set(file.path, i);
    file.findings.forEach((f, j) => {
      if (f.channel !== null && f.channel > INT32_MAX) throw unprocessable(`invalid report: files.${i}.findings.${j}.channel is too large`);
    });
  });
  if (report.summary.files !== report.files.length) {
    throw unprocessable(`invalid report: summary.files is ${report.summary.files} but files has ${report.files.length} entries`);
  }
}

export async function readReport(part: UploadedPart | undefined, limits: UploadLimits): Promise<ScanReport> {
  if (!part) throw badRequest('the multipart body needs a file part named "report" with the JSON report', "missing_report");
  if (part.size > limits.maxReportBytes) throw payloadTooLarge(`the report is larger than ${limits.maxReportBytes} bytes`);
  let json: unknown;
  try {
    json = JSON.parse(await readFile(part.path, "utf8"));
  } catch {
    throw badRequest("the report part is not valid JSON", "invalid_json");
  }
  const report = parseWith(scanReportSchema, json, "report", (message, details) => unprocessable(message, "invalid_report", details));
  const nulAt = findNul(report, "");
  if (nulAt) throw unprocessable(`invalid report: ${nulAt} contains a NUL character`);
  checkConsistency(report);
  return report;
}

/** Image parts are named "<n>.png", n an index into report.files; we check the bytes are PNG. */
export async function readImageParts(parts: UploadedPart[], fileCount: number, limits: UploadLimits): Promise<ImagePart[]> {
  if (parts.length > limits.maxImages) throw payloadTooLarge(`at most ${limits.maxImages} images per upload`);
  const seen = new Set<string>();
  const images: ImagePart[] = [];
  for (const part of parts) {
    const kind = part.fieldname as ImageKind;
    if (!IMAGE_KINDS.includes(kind)) throw badRequest(`unexpected file part "${part.fieldname}"`, "bad_upload");
    const match = /^(\d{1,9})\.png$/i.exec(part.originalname);
    if (!match) throw badRequest(`${kind} part "${part.originalname}" must be named <n>.png, n being the file's index in the report`, "bad_image_name");
    const fileIndex = Number(match[1]);
    if (fileIndex >= fileCount) throw badRequest(`${kind} ${part.originalname}: the report has no file ${fileIndex} (it has ${fileCount})`, "unknown_file_index");
    const id = `${kind}:${fileIndex}`;
    if (seen.has(id)) throw badRequest(`two ${kind} parts for file ${fileIndex}`, "duplicate_image");
    seen.add(id);
    if (part.size > limits.maxImageBytes) throw new HttpError(413, "payload_too_large", `${kind} ${part.originalname} is larger than ${limits.maxImageBytes} bytes`);
    const head = Buffer.alloc(PNG_MAGIC.length);
    const handle = await open(part.path, "r");
    try {
      await handle.read(head, 0, head.length, 0);
    } finally {
      await handle.close();
    }
    // PNG spec (ISO/IEC 15948) §5.2: the 8-byte signature.
    if (!head.equals(PNG_MAGIC)) throw badRequest(`${kind} ${part.originalname} is not a PNG image`, "not_png");
    images.push({ fileIndex, kind, path: part.path });
  }
  return images;
}
