/**
 * Streams a stored object as an HTTP response: whole, or one byte range for audio (HTTP range requests,
 * RFC 9110 §14). Keys are unique per upload and never rewritten, so a key-derived ETag is a strong
 * validator and every answer may be cached privately for a day.
 */
import { createHash } from "node:crypto";
import type { Request, Response } from "express";
import type { AppContext } from "../context.ts";
import { notFound } from "../errors.ts";
import { ObjectNotFoundError, type ByteRange } from "../storage/ObjectStore.ts";

export interface ObjectToSend {
  key: string | null;
  contentType: string;
  /** What it is, for the 404 message ("close-up 2 spectrogram of file"). */
  what: string;
  fileId: number;
}

const etagOf = (key: string, size: number): string => `"${createHash("sha256").update(key).digest("base64url").slice(0, 22)}-${size.toString(36)}"`;

async function stream(ctx: AppContext, res: Response, key: string, what: string, fileId: number, range?: ByteRange): Promise<void> {
  let body;
  try {
    body = await ctx.store.get(key, range);
  } catch (e) {
    if (e instanceof ObjectNotFoundError) throw notFound(what, fileId);
    throw e;
  }
  body.on("error", (e) => {
    ctx.logger.error(`reading ${key}: ${String(e)}`);
    res.destroy(e);
  });
  body.pipe(res);
}

async function sizeOf(ctx: AppContext, key: string, what: string, fileId: number): Promise<number> {
  try {
    return await ctx.store.size(key);
  } catch (e) {
    if (e instanceof ObjectNotFoundError) throw notFound(what, fileId);
    throw e;
  }
}

export async function sendObject(ctx: AppContext, res: Response, object: ObjectToSend): Promise<void> {
  if (!object.key) throw notFound(object.what, object.fileId);
  res.set({ "Content-Type": object.contentType, "Cache-Control": "private, max-age=86400, immutable" });
  await stream(ctx, res, object.key, object.what, object.fileId);
}

/**
 * With range support (RFC 9110): no Range, a malformed one (§14.2: ignored), several ranges or a stale
 * If-Range (§13.1.5) → 200 with the whole object; one satisfiable range → 206 with Content-Range
 * "bytes first-last/complete-length" (§14.4); none satisfiable → 416 with "bytes *\/complete-length".
 */
export async function sendObjectWithRanges(ctx: AppContext, req: Request, res: Response, object: ObjectToSend): Promise<void> {
  if (!object.key) throw notFound(object.what, object.fileId);
  const size = await sizeOf(ctx, object.key, object.what, object.fileId);
  const etag = etagOf(object.key, size);
  res.set({ "Content-Type": object.contentType, "Cache-Control": "private, max-age=86400, immutable", "Accept-Ranges": "bytes", ETag: etag });
  // If-None-Match with our ETag (RFC 9110 §13.1.2): the copy the browser has is current.
  if (req.fresh) {
    res.status(304).end();
    return;
  }
  const ifRange = req.get("If-Range");
  // express's req.range() is the range-parser package; combine merges overlapping/adjacent ranges.
  const ranges = ifRange === undefined || ifRange === etag ? req.range(size, { combine: true }) : undefined;
  if (ranges === -1) {
    res.status(416).set({ "Content-Range": `bytes */${size}`, "Content-Type": "application/json; charset=utf-8" });
    res.json({ error: { code: "range_not_satisfiable", message: `the requested range is outside the excerpt's ${size} bytes` } });
    return;
  }
  if (ranges === undefined || ranges === -2 || ranges.type !== "bytes" || ranges.length !== 1) {
    res.set("Content-Length", String(size));
    await stream(ctx, res, object.key, object.what, object.fileId);
    return;
  }
  const { start, end } = ranges[0];
  res.status(206).set({ "Content-Range": `bytes ${start}-${end}/${size}`, "Content-Length": String(end - start + 1) });
  await stream(ctx, res, object.key, object.what, object.fileId, { start, end });
}
