/**
 * Deleting a batch: its rows go in one transaction (file results, findings, comments, review events and
 * fingerprints cascade), then every object its files referenced is deleted, so nothing is left orphaned.
 * If an object delete fails, it is unreferenced from then on and the start-up sweep removes it.
 */
import { QueryTypes } from "sequelize";
import type { AppContext } from "../context.ts";
import { conflict, notFound } from "../errors.ts";
import { deleteObjects } from "./artefacts.ts";
import type { Actor } from "./actor.ts";
import { recordAudit } from "./audit.ts";

export async function deleteBatch(ctx: AppContext, actor: Actor, batchId: number): Promise<{ files: number; objects: number }> {
  const keys = await ctx.sequelize.transaction(async (transaction) => {
    const [batch] = await ctx.sequelize.query<{ id: number; batch_key: string; has_run: boolean }>(
      `select b.id, b.batch_key, exists (select 1 from scan_runs r where r.batch_id = b.id) as has_run
         from batches b where b.id = $1 for update of b`,
      { bind: [batchId], type: QueryTypes.SELECT, transaction },
    );
    if (!batch) throw notFound("batch", batchId);
    // A distributed run keeps appending to its batch; it would lose its target.
    if (batch.has_run) throw conflict(`batch ${batchId} belongs to a distributed scanning run and cannot be deleted`, "batch_has_run");
    const rows = await ctx.sequelize.query<{ keys: string[] }>(
      `select array_remove(array[spectrogram_key, waveform_key], null) || artefact_keys as keys from file_results where batch_id = $1`,
      { bind: [batchId], type: QueryTypes.SELECT, transaction },
    );
    await ctx.sequelize.query(`delete from batches where id = $1`, { bind: [batchId], transaction });
    const all = rows.flatMap((r) => r.keys);
    await recordAudit(actor, { action: "batch.delete", targetType: "batch", targetId: batchId, details: { batchKey: batch.batch_key, files: rows.length, objects: all.length } }, transaction);
    return { files: rows.length, all };
  });
  await deleteObjects(ctx, keys.all);
  return { files: keys.files, objects: keys.all.length };
}
