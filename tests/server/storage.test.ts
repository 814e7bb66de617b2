/** The filesystem object store: round trip, listing, and keys that cannot leave its folder. */
import { existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { createFsStore } from "../../server/src/storage/fsStore.ts";
import { closeupKey, fileDataKey, imageKey, newUploadId } from "../../server/src/storage/objectKeys.ts";
import { ObjectNotFoundError } from "../../server/src/storage/ObjectStore.ts";

const dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "fsstore-"));
const root = path.join(dir, "objects");
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function read(stream: AsyncIterable<unknown>): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const c of stream) chunks.push(c as Buffer);
  return Buffer.concat(chunks);
}

describe("fs store", () => {
  it("puts, gets, lists by prefix and deletes, dropping empty upload folders", async () => {
    const store = createFsStore(root);
    const upload = newUploadId();
    const a = imageKey(upload, 0, "spectrogram");
    const b = imageKey(upload, 0, "waveform");
    await store.put(a, Buffer.from("first"), "image/png");
    await store.put(b, Buffer.from("second"), "image/png");
    expect((await read(await store.get(a))).toString()).toBe("first");
    const listed: string[] = [];
    for await (const o of store.list("images/")) listed.push(o.key);
    expect(listed.sort()).toEqual([a, b].sort());
    await store.delete(a);
    await store.delete(b);
    await expect(store.get(a)).rejects.toBeInstanceOf(ObjectNotFoundError);
    expect(existsSync(path.join(root, "images", upload))).toBe(false);
    expect(readdirSync(path.join(root, "images"))).toEqual([]);
  });

  it("stores a file by path (putFile) with the file's bytes, and leaves no temporary file when the source is missing", async () => {
    const store = createFsStore(root);
    const key = imageKey(newUploadId(), 1, "spectrogram");
    const source = path.join(dir, "part-0");
    const bytes = Buffer.from(Array.from({ length: 3000 }, (_, i) => (i * 7) % 256));
    writeFileSync(source, bytes);
    await store.putFile!(key, source, "image/png");
    expect((await read(await store.get(key))).equals(bytes)).toBe(true);
    expect(await store.size(key)).toBe(3000);
    const missing = imageKey(newUploadId(), 0, "waveform");
    await expect(store.putFile!(missing, path.join(dir, "no-such-part"), "image/png")).rejects.toThrow(/ENOENT/);
    const folder = path.join(root, path.dirname(missing));
    expect(existsSync(folder) ? readdirSync(folder) : []).toEqual([]);
    await store.delete(key);
  });

  it("refuses keys that could escape the folder or hide files", async () => {
    const store = createFsStore(root);
    for (const key of ["../outside.png", "/etc/passwd", "images/../../outside.png", "images/./x.png", ".hidden", "images//x.png", "IMAGES/x.png", "images/x.png\u0000"]) {
      await expect(store.put(key, Buffer.from("x"), "image/png"), key).rejects.toThrow(/unsafe object key/);
    }
    expect(existsSync(path.join(dir, "outside.png"))).toBe(false);
  });

  it("builds image keys only from a server UUID, an index and a fixed kind", () => {
    expect(imageKey("0b6f4c1e-8f7a-4c3e-9a35-3f5c2f9b8e11", 12, "waveform")).toBe("images/0b6f4c1e-8f7a-4c3e-9a35-3f5c2f9b8e11/12-waveform.png");
    expect(() => imageKey("../x", 0, "waveform")).toThrow();
    expect(() => imageKey(newUploadId(), -1, "waveform")).toThrow();
  });

  it("reads a byte range (inclusive, as HTTP ranges are) and an object's size", async () => {
    const store = createFsStore(root);
    const key = closeupKey(newUploadId(), 3, 1, "excerpt.wav");
    const bytes = Buffer.from(Array.from({ length: 256 }, (_, i) => i));
    await store.put(key, bytes, "audio/wav");
    expect(await store.size(key)).toBe(256);
    expect((await read(await store.get(key, { start: 10, end: 19 }))).equals(bytes.subarray(10, 20))).toBe(true);
    expect((await read(await store.get(key, { start: 255, end: 255 })))[0]).toBe(255);
    await store.delete(key);
    await expect(store.size(key)).rejects.toBeInstanceOf(ObjectNotFoundError);
  });

  it("builds artefact keys under the upload's folder from indexes and fixed kinds only", () => {
    const id = "0b6f4c1e-8f7a-4c3e-9a35-3f5c2f9b8e11";
    expect(fileDataKey(id, 2, "level-grid")).toBe(`images/${id}/2-level-grid.json`);
    expect(closeupKey(id, 2, 7, "excerpt.flac")).toBe(`images/${id}/2-closeup-7-excerpt.flac`);
    expect(() => closeupKey(id, 2, -1, "spectrogram.png")).toThrow();
    expect(() => closeupKey(id, 2, 1.5, "waveform.png")).toThrow();
    expect(() => fileDataKey("../x", 0, "loudness-curve")).toThrow();
  });
});
