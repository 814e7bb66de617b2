/** Object keys for uploaded images, built only from server-generated ids. */
import { randomUUID } from "node:crypto";
import { assertSafeKey } from "./ObjectStore.ts";

export const IMAGE_KINDS = ["spectrogram", "waveform"] as const;
export type ImageKind = (typeof IMAGE_KINDS)[number];

export const IMAGE_PREFIX = "images/";

/** One folder per upload, named by a server-side UUID, so a failed upload's objects are easy to find. */
export function newUploadId(): string {
  return randomUUID();
}

export function imageKey(uploadId: string, fileIndex: number, kind: ImageKind): string {
  if (!/^[0-9a-f-]{36}$/.test(uploadId)) throw new Error(`bad upload id ${uploadId}`);
  if (!Number.isInteger(fileIndex) || fileIndex < 0) throw new Error(`bad file index ${fileIndex}`);
  const key = `${IMAGE_PREFIX}${uploadId}/${fileIndex}-${kind}.png`;
  assertSafeKey(key);
  return key;
}
