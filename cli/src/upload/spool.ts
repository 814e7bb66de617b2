/**
 * Batches that could not be delivered wait in the spool folder (one subfolder each: batch.json, the
 * report, the PNGs) until `tidemark upload --spool` sends them. A batch is written to a temporary folder
 * and renamed into place, so a crash never leaves half a batch to send. A batch the server refused (4xx
 * other than a refused token) moves to `rejected/` with the reason in rejected.json: sending it again
 * cannot help, and nothing is deleted.
 */
import { mkdir, readdir, readFile, rename, rm, writeFile } from "node:fs/promises";
import path from "node:path";
import type { ImagePart, IngestBatch } from "./ingestClient.ts";

export interface SpooledBatch {
  /** The batch's folder. */
  dir: string;
  server: string;
  spooledAt: string;
  batch: IngestBatch;
}

interface SpoolManifest {
  kind: "tidemark.spool/1";
  server: string;
  collection: string;
  batchKey: string;
  spooledAt: string;
  /** `name` and `mediaType` are absent in batches spooled before close-ups (PNG parts `<n>.png`). */
  images: { field: ImagePart["field"]; fileIndex: number; file: string; name?: string; mediaType?: string }[];
}

const safeName = (s: string): string => s.replace(/[^A-Za-z0-9._-]+/g, "_").slice(0, 64);

export async function spoolBatch(spoolRoot: string, server: string, batch: IngestBatch, now = new Date()): Promise<string> {
  await mkdir(spoolRoot, { recursive: true, mode: 0o700 });
  const name = `${now.toISOString().replace(/[:.]/g, "-")}-${safeName(batch.batchKey)}`;
  const temp = path.join(spoolRoot, `.incoming-${name}-${process.pid}`);
  await mkdir(temp, { recursive: true });
  // A named part (close-ups: several a file and field) is stored under its field and name, which are unique.
  const images = batch.images.map((image) =>
    image.name
      ? { field: image.field, fileIndex: image.fileIndex, file: `${image.field}-${safeName(image.name)}`, name: image.name, ...(image.mediaType ? { mediaType: image.mediaType } : {}) }
      : { field: image.field, fileIndex: image.fileIndex, file: `${image.field}-${image.fileIndex}.png` },
  );
  for (const [i, image] of batch.images.entries()) await writeFile(path.join(temp, images[i].file), image.bytes);
  await writeFile(path.join(temp, "report.json"), batch.reportJson);
  const manifest: SpoolManifest = {
    kind: "tidemark.spool/1",
    server,
    collection: batch.collection,
    batchKey: batch.batchKey,
    spooledAt: now.toISOString(),
    images,
  };
  await writeFile(path.join(temp, "batch.json"), `${JSON.stringify(manifest, null, 2)}\n`);
  const target = path.join(spoolRoot, name);
  await rm(target, { recursive: true, force: true });
  await rename(temp, target);
  return target;
}

export const REJECTED_DIR = "rejected";

async function subfolders(root: string): Promise<string[]> {
  const entries = await readdir(root, { withFileTypes: true }).catch((error: { code?: string }) => {
    if (error.code === "ENOENT") return [];
    throw error;
  });
  return entries
    .filter((e) => e.isDirectory() && !e.name.startsWith(".") && e.name !== REJECTED_DIR)
    .map((e) => path.join(root, e.name))
    .sort();
}

/** Spooled batches, oldest first; folders that are not complete batches are left alone. */
export async function listSpooled(spoolRoot: string): Promise<string[]> {
  return subfolders(spoolRoot);
}

export interface RejectionReason {
  status: number;
  code: string;
  message: string;
  server: string;
  rejectedAt: string;
}

/** Moves a spooled batch to rejected/, with why; returns its new folder. */
export async function rejectSpooled(spoolRoot: string, dir: string, reason: Omit<RejectionReason, "rejectedAt">, now = new Date()): Promise<string> {
  const target = path.join(spoolRoot, REJECTED_DIR, path.basename(dir));
  await mkdir(path.dirname(target), { recursive: true, mode: 0o700 });
  await writeFile(path.join(dir, "rejected.json"), `${JSON.stringify({ ...reason, rejectedAt: now.toISOString() }, null, 2)}\n`);
  await rm(target, { recursive: true, force: true });
  await rename(dir, target);
  return target;
}

/** Batches in rejected/, oldest first, with the server's reason (null when rejected.json is unreadable). */
export async function listRejected(spoolRoot: string): Promise<{ dir: string; reason: RejectionReason | null }[]> {
  const dirs = await subfolders(path.join(spoolRoot, REJECTED_DIR));
  return Promise.all(
    dirs.map(async (dir) => ({
      dir,
      reason: await readFile(path.join(dir, "rejected.json"), "utf8")
        .then((t) => JSON.parse(t) as RejectionReason)
        .catch(() => null),
    })),
  );
}

export async function loadSpooled(dir: string): Promise<SpooledBatch> {
  const manifest = JSON.parse(await readFile(path.join(dir, "batch.json"), "utf8")) as SpoolManifest;
  if (manifest.kind !== "tidemark.spool/1") throw new Error(`${dir}: not a spooled tidemark batch`);
  const images: ImagePart[] = [];
  for (const image of manifest.images) {
    images.push({
      field: image.field,
      fileIndex: image.fileIndex,
      bytes: await readFile(path.join(dir, image.file)),
      ...(image.name ? { name: image.name } : {}),
      ...(image.mediaType ? { mediaType: image.mediaType } : {}),
    });
  }
  return {
    dir,
    server: manifest.server,
    spooledAt: manifest.spooledAt,
    batch: { reportJson: await readFile(path.join(dir, "report.json"), "utf8"), collection: manifest.collection, batchKey: manifest.batchKey, images },
  };
}

export async function removeSpooled(dir: string): Promise<void> {
  await rm(dir, { recursive: true, force: true });
}
