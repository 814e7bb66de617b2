/**
 * GET /api/exports/collections/:id.json: every batch of a collection in the batch export's shape, streamed
 * one batch at a time so a large collection never sits in memory whole.
 */
import type { Response } from "express";
import { toCollectionDto } from "../dto.ts";
import { Batch, Collection, User } from "../models/index.ts";
import { batchExport } from "./batchJson.ts";

export const COLLECTION_EXPORT_SCHEMA = "tidemark.collection-export/1";

/** Writes `{ schema, exportedAt, collection, batches: [BatchExport…] }` and ends the response. */
export async function writeCollectionJson(collection: Collection, res: Response): Promise<void> {
  const batches = await Batch.findAll({
    where: { collectionId: collection.id },
    attributes: ["id"],
    order: [["startedAt", "ASC"], ["id", "ASC"]],
  });
  const head = { schema: COLLECTION_EXPORT_SCHEMA, exportedAt: new Date().toISOString(), collection: toCollectionDto(collection) };
  res.write(`${JSON.stringify(head).slice(0, -1)},"batches":[`);
  let first = true;
  for (const { id } of batches) {
    const batch = await Batch.findByPk(id, { include: [{ model: Collection, as: "collection" }, { model: User, as: "uploader" }] });
    if (!batch) continue; // deleted while streaming
    const chunk = JSON.stringify(await batchExport(batch));
    const ok = res.write(first ? chunk : `,${chunk}`);
    first = false;
    if (!ok) await new Promise((resolve) => res.once("drain", resolve));
  }
  res.end("]}");
}
