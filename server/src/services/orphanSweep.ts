/**
 * Start-up clean-up after a crash: objects (images, level grids, loudness curves, close-ups, excerpts)
 * written for an upload whose transaction never committed, or left by a batch deleted outside the API, and
 * multipart temp files, once older than a cut-off (default one hour, longer than any upload takes).
 */
import { readdir, rm, stat } from "node:fs/promises";
import path from "node:path";
import { QueryTypes, type Sequelize } from "sequelize";
import type { Logger } from "../logger.ts";
import type { ObjectStore } from "../storage/ObjectStore.ts";
import { IMAGE_PREFIX } from "../storage/objectKeys.ts";

export const ORPHAN_AGE_MS = 60 * 60_000;
const CHUNK = 500;

export async function sweepOrphanObjects(
  deps: { sequelize: Sequelize; store: ObjectStore; logger: Logger },
  olderThanMs = ORPHAN_AGE_MS,
): Promise<{ checked: number; deleted: string[] }> {
  const cutoff = Date.now() - olderThanMs;
  const deleted: string[] = [];
  let checked = 0;
  let candidates: string[] = [];
  const flush = async (): Promise<void> => {
    if (candidates.length === 0) return;
    const referenced = await deps.sequelize.query<{ key: string }>(
      `select k as key from unnest($1::text[]) as k
        where exists (select 1 from file_results where spectrogram_key = k)
           or exists (select 1 from file_results where waveform_key = k)
           or exists (select 1 from file_results where artefact_keys @> array[k])`,
      { bind: [candidates], type: QueryTypes.SELECT },
    );
    const keep = new Set(referenced.map((r) => r.key));
    for (const key of candidates) {
      if (keep.has(key)) continue;
      await deps.store.delete(key);
      deleted.push(key);
    }
    candidates = [];
  };
  for await (const object of deps.store.list(IMAGE_PREFIX)) {
    checked++;
    if (object.lastModified.getTime() > cutoff) continue;
    candidates.push(object.key);
    if (candidates.length >= CHUNK) await flush();
  }
  await flush();
  if (deleted.length) deps.logger.info(`orphan sweep: removed ${deleted.length} unreferenced object(s) of ${checked}`);
  return { checked, deleted };
}

/** Multipart temp files left by a killed process. */
export async function sweepStaleUploads(dir: string, olderThanMs = ORPHAN_AGE_MS): Promise<number> {
  let removed = 0;
  let names: string[];
  try {
    names = await readdir(dir);
  } catch {
    return 0;
  }
  const cutoff = Date.now() - olderThanMs;
  for (const name of names) {
    const file = path.join(dir, name);
    const info = await stat(file).catch(() => null);
    if (info && info.mtimeMs <= cutoff) {
      await rm(file, { force: true, recursive: true });
      removed++;
    }
  }
  return removed;
}
