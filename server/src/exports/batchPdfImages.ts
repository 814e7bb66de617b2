/**
 * The spectrogram thumbnails a batch PDF shows: for each failing or flagged file, its stored spectrogram
 * PNG from the object store. Bounded in count and size so one export cannot exhaust memory; a missing or
 * unreadable object is left out (the PDF says "none stored") and logged, never fatal.
 */
import type { Readable } from "node:stream";
import { FileResult } from "../models/index.ts";
import type { ObjectStore } from "../storage/ObjectStore.ts";
import type { Logger } from "../logger.ts";
import { wantsThumbnail } from "./batchPdf.ts";
import type { BatchExport } from "./batchJson.ts";

export const MAX_THUMBNAILS = 200;
export const MAX_THUMBNAIL_BYTES = 8 * 1024 * 1024;

async function readBounded(stream: Readable, limit: number): Promise<Buffer | null> {
  const chunks: Buffer[] = [];
  let size = 0;
  for await (const chunk of stream) {
    size += (chunk as Buffer).length;
    if (size > limit) {
      stream.destroy();
      return null;
    }
    chunks.push(chunk as Buffer);
  }
  return Buffer.concat(chunks);
}

export async function loadThumbnails(store: ObjectStore, data: BatchExport, logger: Logger): Promise<Map<number, Buffer>> {
  const wanted = data.files.filter(wantsThumbnail).slice(0, MAX_THUMBNAILS).map((f) => f.id);
  const out = new Map<number, Buffer>();
  if (wanted.length === 0) return out;
  const rows = await FileResult.findAll({ where: { id: wanted }, attributes: ["id", "spectrogramKey"] });
  for (const row of rows) {
    if (!row.spectrogramKey) continue;
    try {
      const bytes = await readBounded(await store.get(row.spectrogramKey), MAX_THUMBNAIL_BYTES);
      if (bytes) out.set(row.id, bytes);
      else logger.warn(`batch PDF: spectrogram ${row.spectrogramKey} is over ${MAX_THUMBNAIL_BYTES} bytes, left out`);
    } catch (e) {
      logger.warn(`batch PDF: spectrogram ${row.spectrogramKey} could not be read (${String(e)}), left out`);
    }
  }
  return out;
}
