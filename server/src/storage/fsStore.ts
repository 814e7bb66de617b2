/** Filesystem driver: one file per key under a root folder (default .data/objects). */
import { randomBytes } from "node:crypto";
import { createReadStream } from "node:fs";
import { copyFile, mkdir, readdir, rename, rm, rmdir, stat, writeFile } from "node:fs/promises";
import path from "node:path";
import type { Readable } from "node:stream";
import { assertSafeKey, ObjectNotFoundError, type ObjectStore, type StoredObjectInfo } from "./ObjectStore.ts";

export function createFsStore(rootDir: string): ObjectStore {
  const root = path.resolve(rootDir);
  const fileFor = (key: string): string => {
    assertSafeKey(key);
    const file = path.resolve(root, key);
    if (!file.startsWith(root + path.sep)) throw new Error(`object key escapes the store: ${key}`);
    return file;
  };

  async function* walk(dir: string): AsyncGenerator<StoredObjectInfo> {
    let entries;
    try {
      entries = await readdir(dir, { withFileTypes: true });
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === "ENOENT") return;
      throw e;
    }
    for (const entry of entries) {
      const full = path.join(dir, entry.name);
      if (entry.isDirectory()) yield* walk(full);
      else if (entry.isFile() && !entry.name.startsWith(".")) {
        const info = await stat(full);
        yield { key: path.relative(root, full).split(path.sep).join("/"), lastModified: info.mtime };
      }
    }
  }

  /** Write then rename, so a reader never sees half a PNG; a failed write leaves no temporary file. */
  async function putVia(key: string, write: (tmp: string) => Promise<void>): Promise<void> {
    const file = fileFor(key);
    await mkdir(path.dirname(file), { recursive: true });
    const tmp = path.join(path.dirname(file), `.${path.basename(file)}.${randomBytes(6).toString("hex")}.tmp`);
    try {
      await write(tmp);
      await rename(tmp, file);
    } catch (e) {
      await rm(tmp, { force: true });
      throw e;
    }
  }

  return {
    async put(key, body) {
      await putVia(key, (tmp) => writeFile(tmp, body));
    },
    async putFile(key, source) {
      await putVia(key, (tmp) => copyFile(source, tmp));
    },
    async get(key, range): Promise<Readable> {
      const file = fileFor(key);
      try {
        await stat(file);
      } catch {
        throw new ObjectNotFoundError(key);
      }
      // createReadStream's start/end are inclusive, like an HTTP byte range.
      return createReadStream(file, range ? { start: range.start, end: range.end } : {});
    },
    async size(key) {
      const file = fileFor(key);
      try {
        return (await stat(file)).size;
      } catch {
        throw new ObjectNotFoundError(key);
      }
    },
    async delete(key) {
      const file = fileFor(key);
      await rm(file, { force: true });
      // Drop the upload folder once its last image is gone; a non-empty folder just stays.
      if (path.dirname(file) !== root) await rmdir(path.dirname(file)).catch(() => undefined);
    },
    async *list(prefix) {
      const base = prefix.endsWith("/") ? prefix.slice(0, -1) : path.posix.dirname(prefix);
      const start = base && base !== "." ? path.join(root, base) : root;
      for await (const info of walk(start)) if (info.key.startsWith(prefix)) yield info;
    },
  };
}
