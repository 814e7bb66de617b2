/**
 * The one multipart reader for uploads that carry a scan report (POST /api/ingest and a worker's job
 * result). Limits are checked while the body streams in, before a byte reaches the disk:
 * - the body is capped by `maxTotalBytes` (the Content-Length, when sent, is checked before reading);
 * - the report part (the CLI sends it first) is parsed and validated as soon as it ends, and narrows the
 *   cap to what that report can carry: its own size plus, per file and per close-up, each kind's cap;
 * - each part's name, index, size and first bytes follow PART_KINDS (services/ingestValidation.ts).
 * A breach answers at once (413 too large, 415 wrong file type, 400 malformed, 422 invalid report), with
 * `Connection: close`; the rest of the body is read and thrown away (for at most DRAIN_MS) so the client
 * sees the answer, and the request's temporary folder is removed straight away.
 * Routes find the result in res.locals.upload; the folder is removed when the response closes.
 */
import { mkdirSync } from "node:fs";
import { mkdtemp, open, rm } from "node:fs/promises";
import path from "node:path";
import type { Readable } from "node:stream";
import busboy, { type Busboy } from "busboy";
import type { RequestHandler } from "express";
import type { ScanReport } from "@tidemark/shared/types/report";
import type { AppContext, UploadLimits } from "../context.ts";
import { badRequest, HttpError, payloadTooLarge } from "../errors.ts";
import {
  artefactPartsOf,
  isCloseupKind,
  isJsonObject,
  MAGIC_HEAD_BYTES,
  PART_KIND_NAMES,
  PART_KINDS,
  validateReport,
  type ArtefactPart,
  type PartKind,
  type ReceivedPart,
} from "../services/ingestValidation.ts";
import { assertStorableText } from "./textGuard.ts";

export interface ReceivedUpload {
  fields: Record<string, string>;
  /** Null when the body had no report part (the route answers 400). */
  report: ScanReport | null;
  parts: ReceivedPart[];
}

/** After an error, how long the rest of the body is read (and discarded) before the socket is closed. */
const DRAIN_MS = 10_000;
/** Room for the text fields and part headers on top of the parts' own caps. */
const FIELDS_ALLOWANCE = 64 * 1024;
const MAX_FIELDS = 10;
const MAX_FIELD_BYTES = 4096;
const REPORT_PART = "report";
/**
 * A part's chunks are gathered to about this much before each write: a 1 MB image arrives in dozens of
 * small chunks, and one write per chunk cost the server more than the rest of storing a job's result.
 */
const WRITE_BATCH_BYTES = 1024 * 1024;

const wrongType = (message: string): HttpError => new HttpError(415, "wrong_file_type", message);

function closeupCount(report: ScanReport, fileIndex: number): number {
  const closeups = (report.files[fileIndex] as { closeups?: unknown } | undefined)?.closeups;
  return Array.isArray(closeups) ? closeups.length : 0;
}

/** What a body carrying this report may weigh at most (ASVS 4.0 V12.1.1). */
export function uploadBudget(report: ScanReport, reportBytes: number, limits: UploadLimits): number {
  let closeups = 0;
  for (let i = 0; i < report.files.length; i++) closeups += closeupCount(report, i);
  let total = reportBytes + FIELDS_ALLOWANCE;
  for (const kind of PART_KIND_NAMES) total += (isCloseupKind(kind) ? closeups : report.files.length) * PART_KINDS[kind].maxBytes(limits);
  return Math.min(total, limits.maxTotalBytes);
}

function checkIndexes(part: ReceivedPart, report: ScanReport): void {
  const files = report.files.length;
  if (part.fileIndex >= files) {
    throw badRequest(`${part.kind} ${part.originalname}: the report has no file ${part.fileIndex} (it has ${files})`, "unknown_file_index");
  }
  if (part.closeupIndex !== null) {
    const count = closeupCount(report, part.fileIndex);
    if (part.closeupIndex >= count) {
      throw badRequest(`${part.kind} ${part.originalname}: file ${part.fileIndex} of the report has no close-up ${part.closeupIndex} (it has ${count})`, "unknown_closeup_index");
    }
  }
}

/**
 * The upload's report and its artefact parts, each checked against what the report says (400 when the
 * body had no report): what both ingest routes, a batch upload and a worker's job result, store.
 */
export async function uploadedReport(upload: ReceivedUpload): Promise<{ report: ScanReport; artefacts: ArtefactPart[] }> {
  if (!upload.report) throw badRequest('the multipart body needs a file part named "report" with the JSON report', "missing_report");
  return { report: upload.report, artefacts: await artefactPartsOf(upload.parts, upload.report) };
}

const hex = (b: Buffer): string => [...b.subarray(0, 8)].map((x) => x.toString(16).padStart(2, "0")).join(" ") || "nothing";

/**
 * @param what how the route names its body in the 415 for a non-multipart request
 */
export function reportUpload(ctx: AppContext, what: string): RequestHandler {
  const { uploadTmpDir } = ctx.settings;
  mkdirSync(uploadTmpDir, { recursive: true });

  return (req, res, next) => {
    const limits = ctx.settings.upload;
    if (!req.is("multipart/form-data")) {
      next(new HttpError(415, "unsupported_media_type", `send ${what} as multipart/form-data (part "report" first, then the file parts)`));
      return;
    }

    const upload: ReceivedUpload = { fields: {}, report: null, parts: [] };
    const seen = new Set<string>();
    let budget = limits.maxTotalBytes;
    let received = 0;
    let dir: Promise<string> | null = null;
    let current: Readable | null = null;
    let failed = false;
    let chain: Promise<void> = Promise.resolve();

    const removeDir = (): void => {
      if (dir) void dir.then((d) => rm(d, { recursive: true, force: true })).catch((e: unknown) => ctx.logger.warn(`upload folder not removed (the start-up sweep will): ${String(e)}`));
      dir = null;
    };
    res.once("close", removeDir);

    let bb: Busboy;
    const fail = (err: unknown): void => {
      if (failed) return;
      failed = true;
      req.unpipe(bb);
      current?.destroy();
      removeDir();
      if (!req.complete) {
        // Read the rest and drop it, so the client gets our answer rather than a reset; not for ever.
        res.set("Connection", "close");
        req.resume();
        const guard = setTimeout(() => req.socket?.destroy(), DRAIN_MS);
        guard.unref();
        req.once("end", () => clearTimeout(guard));
      }
      next(err);
    };

    const count = (bytes: number): void => {
      received += bytes;
      if (received > budget) {
        const why = upload.report ? `what a report of ${upload.report.files.length} file(s) can carry` : "the largest upload this server takes";
        throw payloadTooLarge(`the upload is larger than ${budget} bytes, ${why}`);
      }
    };

    /** Streams one part to disk after its first bytes pass `check`; the cap is checked on every chunk. */
    async function toDisk(stream: Readable, label: string, maxBytes: number, check: (head: Buffer) => void): Promise<{ file: string; size: number }> {
      dir ??= mkdtemp(path.join(uploadTmpDir, "up-"));
      const file = path.join(await dir, String(upload.parts.length));
      const handle = await open(file, "wx");
      let head: Buffer | null = Buffer.alloc(0);
      let size = 0;
      let pending: Buffer[] = [];
      let pendingBytes = 0;
      const flush = async (): Promise<void> => {
        if (pending.length === 0) return;
        const buffers = pending;
        pending = [];
        pendingBytes = 0;
        await handle.writev(buffers);
      };
      const keep = async (chunk: Buffer): Promise<void> => {
        pending.push(chunk);
        pendingBytes += chunk.length;
        if (pendingBytes >= WRITE_BATCH_BYTES) await flush();
      };
      try {
        for await (const chunk of stream as AsyncIterable<Buffer>) {
          size += chunk.length;
          count(chunk.length);
          if (size > maxBytes) throw payloadTooLarge(`${label} is larger than ${maxBytes} bytes`);
          if (head) {
            head = Buffer.concat([head, chunk]);
            if (head.length < MAGIC_HEAD_BYTES) continue;
            check(head);
            await keep(head);
            head = null;
          } else {
            await keep(chunk);
          }
        }
        if (head) {
          check(head);
          await keep(head);
        }
        await flush();
      } finally {
        await handle.close();
      }
      return { file, size };
    }

    async function receiveReport(stream: Readable): Promise<void> {
      if (upload.report || seen.has(REPORT_PART)) throw badRequest('the body has two "report" parts', "duplicate_part");
      seen.add(REPORT_PART);
      const chunks: Buffer[] = [];
      let size = 0;
      for await (const chunk of stream as AsyncIterable<Buffer>) {
        size += chunk.length;
        count(chunk.length);
        if (size > limits.maxReportBytes) throw payloadTooLarge(`the report is larger than ${limits.maxReportBytes} bytes`);
        if (chunks.length === 0 && !isJsonObject(chunk)) throw wrongType(`the report part must be a JSON object; it begins with ${hex(chunk)}`);
        chunks.push(chunk);
      }
      let json: unknown;
      try {
        json = JSON.parse(Buffer.concat(chunks).toString("utf8"));
      } catch {
        throw badRequest("the report part is not valid JSON", "invalid_json");
      }
      assertStorableText(json, "report");
      const report = validateReport(json);
      upload.report = report;
      for (const part of upload.parts) checkIndexes(part, report);
      budget = uploadBudget(report, size, limits);
      if (received > budget) count(0);
    }

    async function receivePart(field: PartKind, stream: Readable, name: string): Promise<void> {
      const kind = PART_KINDS[field];
      const perCloseup = isCloseupKind(field);
      if (upload.parts.length >= limits.maxImages) throw payloadTooLarge(`at most ${limits.maxImages} file parts per upload`);
      const match = kind.name.exec(name);
      if (!match) {
        const k = perCloseup ? " and k the close-up's index in that file's closeups" : "";
        throw badRequest(`${field} part "${name}" must be named ${kind.shape}, n being the file's index in the report${k}`, "bad_part_name");
      }
      const part: ReceivedPart = { kind: field, fileIndex: Number(match[1]), closeupIndex: perCloseup ? Number(match[2]) : null, originalname: name, path: "", size: 0 };
      const id = `${field}:${part.fileIndex}:${part.closeupIndex ?? ""}`;
      if (seen.has(id)) throw badRequest(`two ${field} parts for ${part.closeupIndex === null ? `file ${part.fileIndex}` : `close-up ${part.closeupIndex} of file ${part.fileIndex}`}`, "duplicate_part");
      seen.add(id);
      if (upload.report) checkIndexes(part, upload.report);
      const label = `${field} ${name}`;
      const stored = await toDisk(stream, label, kind.maxBytes(limits), (head) => {
        // ASVS 4.0 V12.2.1: the content, not the name, decides what a file is.
        if (!kind.magic(head, name)) throw wrongType(`${label} is not ${kind.type}; it begins with ${hex(head)}`);
      });
      part.path = stored.file;
      part.size = stored.size;
      upload.parts.push(part);
    }

    async function receive(field: string, stream: Readable, name: string): Promise<void> {
      current = stream;
      try {
        if (failed) return void stream.resume();
        if (field === REPORT_PART) return await receiveReport(stream);
        if (!Object.hasOwn(PART_KINDS, field)) throw badRequest(`unexpected file part "${field}"; expected ${[REPORT_PART, ...PART_KIND_NAMES].join(", ")}`, "bad_upload");
        await receivePart(field as PartKind, stream, name);
      } finally {
        current = null;
      }
    }

    try {
      const declared = Number(req.get("content-length"));
      if (Number.isFinite(declared) && declared > limits.maxTotalBytes) {
        throw payloadTooLarge(`the upload declares ${declared} bytes; this server takes at most ${limits.maxTotalBytes}`);
      }
      bb = busboy({
        headers: req.headers,
        limits: { fields: MAX_FIELDS, fieldSize: MAX_FIELD_BYTES, fieldNameSize: 100, files: limits.maxImages + 1, parts: limits.maxImages + 1 + MAX_FIELDS, headerPairs: 100 },
      });
    } catch (e) {
      fail(e instanceof HttpError ? e : badRequest(`malformed multipart body: ${(e as Error).message}`, "bad_upload"));
      return;
    }

    bb.on("field", (name, value, info) => {
      if (failed) return;
      try {
        if (name === REPORT_PART || Object.hasOwn(PART_KINDS, name)) throw badRequest(`"${name}" must be sent as a file part (with a filename), not as a text field`, "bad_upload");
        if (info.valueTruncated || info.nameTruncated) throw payloadTooLarge(`field "${name}" is longer than ${MAX_FIELD_BYTES} bytes`);
        count(Buffer.byteLength(value) + Buffer.byteLength(name));
        upload.fields[name] = value;
      } catch (e) {
        fail(e);
      }
    });
    bb.on("file", (field, stream, info) => {
      const name = info.filename ?? "";
      chain = chain.then(() => receive(field, stream, name)).catch((e: unknown) => {
        stream.resume();
        fail(e);
      });
    });
    bb.on("filesLimit", () => fail(payloadTooLarge(`at most ${limits.maxImages} file parts per upload`)));
    bb.on("partsLimit", () => fail(payloadTooLarge("too many parts in the upload")));
    bb.on("fieldsLimit", () => fail(payloadTooLarge(`at most ${MAX_FIELDS} text fields per upload`)));
    bb.on("error", (e: Error) => fail(badRequest(`malformed multipart body: ${e.message}`, "bad_upload")));
    bb.on("close", () => {
      void chain.then(() => {
        if (failed) return;
        const report = upload.report;
        if (report) for (const part of upload.parts) checkIndexes(part, report);
        assertStorableText(upload.fields, "upload fields");
        res.locals.upload = upload;
        next();
      }).catch(fail);
    });
    // The client went away mid-body: stop, and remove what arrived.
    req.once("close", () => {
      if (!req.complete && !failed) {
        failed = true;
        current?.destroy();
        removeDir();
      }
    });
    req.pipe(bb);
  };
}
