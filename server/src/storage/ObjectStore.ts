/**
 * Where uploaded artefacts live (PNGs, level grids, loudness curves, audio excerpts). Keys are made by the server (objectKeys.ts), never taken from
 * client strings; drivers still refuse unsafe keys as a second line of defence.
 */
import type { Readable } from "node:stream";

export interface StoredObjectInfo {
  key: string;
  lastModified: Date;
}

/** Inclusive byte offsets, as in an HTTP byte range (RFC 9110 §14.1.2). */
export interface ByteRange {
  start: number;
  end: number;
}

export interface ObjectStore {
  put(key: string, body: Buffer, contentType: string): Promise<void>;
  /**
   * Stores a file's bytes without reading them into memory, where the driver can (the filesystem
   * driver copies in the kernel); callers fall back to put() when a store lacks it.
   */
  putFile?(key: string, file: string, contentType: string): Promise<void>;
  /** Rejects with ObjectNotFoundError when the key does not exist. With a range, only those bytes. */
  get(key: string, range?: ByteRange): Promise<Readable>;
  /** The object's length in bytes; rejects with ObjectNotFoundError when the key does not exist. */
  size(key: string): Promise<number>;
  /** Deleting a missing key is not an error. */
  delete(key: string): Promise<void>;
  list(prefix: string): AsyncIterable<StoredObjectInfo>;
}

export class ObjectNotFoundError extends Error {
  constructor(readonly key: string) {
    super(`object ${key} not found`);
    this.name = "ObjectNotFoundError";
  }
}

const SAFE_KEY = /^[a-z0-9][a-z0-9._-]*(\/[a-z0-9][a-z0-9._-]*)*$/;

/** Lower-case segments of [a-z0-9._-], none starting with a dot: no "..", no absolute paths. */
export function assertSafeKey(key: string): void {
  if (key.length > 512 || !SAFE_KEY.test(key)) throw new Error(`unsafe object key: ${JSON.stringify(key)}`);
}
