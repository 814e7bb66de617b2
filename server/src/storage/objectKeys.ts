/** Object keys for uploaded artefacts, built only from server-generated ids, indexes and fixed kinds. */
import { randomUUID } from "node:crypto";
import { assertSafeKey } from "./ObjectStore.ts";

export const IMAGE_KINDS = ["spectrogram", "waveform"] as const;
export type ImageKind = (typeof IMAGE_KINDS)[number];

/** Every upload's objects live under this prefix (the name predates the non-image artefacts). */
export const IMAGE_PREFIX = "images/";

/** One folder per upload, named by a server-side UUID, so a failed upload's objects are easy to find. */
export function newUploadId(): string {
  return randomUUID();
}

function checkIds(uploadId: string, ...indexes: number[]): void {
  if (!/^[0-9a-f-]{36}$/.test(uploadId)) throw new Error(`bad upload id ${uploadId}`);
  for (const i of indexes) if (!Number.isInteger(i) || i < 0) throw new Error(`bad index ${i}`);
}

function made(key: string): string {
  assertSafeKey(key);
  return key;
}

export function imageKey(uploadId: string, fileIndex: number, kind: ImageKind): string {
  checkIds(uploadId, fileIndex);
  return made(`${IMAGE_PREFIX}${uploadId}/${fileIndex}-${kind}.png`);
}

/** A whole-file JSON artefact: the level grid or the loudness curve. */
export function fileDataKey(uploadId: string, fileIndex: number, kind: "level-grid" | "loudness-curve"): string {
  checkIds(uploadId, fileIndex);
  return made(`${IMAGE_PREFIX}${uploadId}/${fileIndex}-${kind}.json`);
}

/** A close-up's PNG or excerpt; the extension follows the excerpt's media type. */
export function closeupKey(uploadId: string, fileIndex: number, closeupIndex: number, kind: "spectrogram.png" | "waveform.png" | "excerpt.flac" | "excerpt.wav"): string {
  checkIds(uploadId, fileIndex, closeupIndex);
  return made(`${IMAGE_PREFIX}${uploadId}/${fileIndex}-closeup-${closeupIndex}-${kind}`);
}
