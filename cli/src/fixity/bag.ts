/**
 * BagIt bags on disk (RFC 8493): reading one for `tidemark verify BAGDIR`, and writing one for
 * `tidemark scan --bag OUTDIR`. The rules live in shared/src/fixity/bagit.ts; this module only reads,
 * hashes (each file once, every algorithm the manifests name) and copies.
 */
import { isUtf8 } from "node:buffer";
import { createHash, type Hash } from "node:crypto";
import { createReadStream, createWriteStream } from "node:fs";
import { mkdir, readdir, readFile, stat, writeFile } from "node:fs/promises";
import path from "node:path";
import { pipeline } from "node:stream/promises";
import { Transform } from "node:stream";
import {
  BAG_ALGORITHMS,
  bagitTxt,
  BagFormatError,
  encodeBagPath,
  formatManifest,
  formatTagFile,
  judgeBag,
  parseManifest,
  parseTagFile,
  type BagAlgorithm,
  type BagObservation,
  type BagVerdict,
  type ManifestEntry,
} from "@tidemark/shared/fixity/bagit";
import { UsageError } from "../errors.ts";
import type { ScanProgress } from "../scan/progress.ts";
import type { FsPath } from "../scan/rawPath.ts";

export async function isBag(dir: string): Promise<boolean> {
  const s = await stat(path.join(dir, "bagit.txt")).catch(() => null);
  return s?.isFile() === true;
}

async function readText(file: string): Promise<string | null> {
  try {
    return await readFile(file, "utf8");
  } catch (error) {
    if ((error as { code?: string }).code === "ENOENT") return null;
    throw error;
  }
}

/** Every regular file under `dir` (relative, forward slashes) with its size; symbolic links are followed. */
async function listFiles(root: string, sub: string, out: Map<string, number>, skip: (rel: string) => boolean): Promise<void> {
  const entries = await readdir(path.join(root, sub), { withFileTypes: true });
  for (const entry of entries) {
    const rel = sub ? `${sub}/${entry.name}` : entry.name;
    if (skip(rel)) continue;
    const s = await stat(path.join(root, rel)).catch(() => null);
    if (s?.isDirectory()) await listFiles(root, rel, out, skip);
    else if (s?.isFile()) out.set(rel, s.size);
  }
}

/** Digests of one file for several algorithms in one read; `onRead` gets the bytes read so far. */
export async function digestsOfFile(file: string | Buffer, algorithms: readonly BagAlgorithm[], onRead?: (bytes: number) => void): Promise<Map<BagAlgorithm, string>> {
  const hashes = algorithms.map((a) => [a, createHash(a)] as [BagAlgorithm, Hash]);
  let read = 0;
  for await (const chunk of createReadStream(file, { highWaterMark: 4 * 1024 * 1024 })) {
    for (const [, h] of hashes) h.update(chunk as Buffer);
    read += (chunk as Buffer).length;
    onRead?.(read);
  }
  return new Map(hashes.map(([a, h]) => [a, h.digest("hex")]));
}

async function readManifests(bagDir: string, prefix: "manifest" | "tagmanifest"): Promise<Map<BagAlgorithm, ManifestEntry[]>> {
  const out = new Map<BagAlgorithm, ManifestEntry[]>();
  for (const algorithm of BAG_ALGORITHMS) {
    const name = `${prefix}-${algorithm}.txt`;
    const text = await readText(path.join(bagDir, name));
    if (text !== null) out.set(algorithm, parseManifest(text, name, algorithm));
  }
  return out;
}

/** Reads and hashes a bag; a malformed tag file or manifest is a usage error naming it. */
export async function verifyBag(bagDir: string, progress: ScanProgress): Promise<BagVerdict> {
  try {
    const bagitText = await readText(path.join(bagDir, "bagit.txt"));
    const infoText = await readText(path.join(bagDir, "bag-info.txt"));
    const manifests = await readManifests(bagDir, "manifest");
    const tagManifests = await readManifests(bagDir, "tagmanifest");
    const payload = new Map<string, number>();
    const data = await stat(path.join(bagDir, "data")).catch(() => null);
    if (data?.isDirectory()) await listFiles(bagDir, "data", payload, () => false);
    const tagSizes = new Map<string, number>();
    await listFiles(bagDir, "", tagSizes, (rel) => rel === "data" || /^tagmanifest-[a-z0-9]+\.txt$/.test(rel));

    // What each file must be hashed with: the algorithms of every manifest that lists it.
    const wanted = new Map<string, Set<BagAlgorithm>>();
    const want = (p: string, a: BagAlgorithm): void => void (wanted.get(p) ?? wanted.set(p, new Set()).get(p)!).add(a);
    for (const [a, entries] of manifests) for (const e of entries) if (payload.has(e.path)) want(e.path, a);
    for (const [a, entries] of tagManifests) for (const e of entries) if (tagSizes.has(e.path)) want(e.path, a);
    const sizeOf = (p: string): number => payload.get(p) ?? tagSizes.get(p) ?? 0;

    const digests = new Map<BagAlgorithm, Map<string, string | null>>(BAG_ALGORITHMS.map((a) => [a, new Map()]));
    for (const [rel, algorithms] of wanted) {
      progress.fileStarted(rel);
      try {
        const found = await digestsOfFile(path.join(bagDir, ...rel.split("/")), [...algorithms], (b) => progress.fileBytes(rel, b));
        for (const [a, hex] of found) digests.get(a)!.set(rel, hex);
      } catch {
        for (const a of algorithms) digests.get(a)!.set(rel, null);
      }
      progress.fileDone(rel, 0, sizeOf(rel));
    }
    const observation: BagObservation = {
      bagit: bagitText === null ? null : parseTagFile(bagitText, "bagit.txt"),
      bagInfo: infoText === null ? null : parseTagFile(infoText, "bag-info.txt"),
      manifests,
      tagManifests,
      payload,
      digests,
      tagFiles: new Set(tagSizes.keys()),
    };
    return judgeBag(observation);
  } catch (error) {
    if (error instanceof BagFormatError) throw new UsageError(`${bagDir} is not a readable bag: ${error.message}`);
    throw error;
  }
}

/** Bytes to hash before verifying a bag: every file the manifests may list, for the progress display. */
export async function bagSize(bagDir: string): Promise<{ files: number; bytes: number }> {
  const all = new Map<string, number>();
  await listFiles(bagDir, "", all, () => false);
  let bytes = 0;
  for (const size of all.values()) bytes += size;
  return { files: all.size, bytes };
}

export interface BagFile {
  /** The scanned file (a Buffer when its name is not UTF-8). */
  absPath: FsPath;
  /** Its path inside data/ (always UTF-8: see bagNameOf). */
  relPath: string;
  sha256: string;
  /** The original relative path's bytes, base64, when the name in the bag differs from them (not UTF-8). */
  pathBytes?: string;
}

/**
 * The bag's name for a relative path whose bytes are not UTF-8. A manifest is UTF-8 text and may
 * percent-encode only CR, LF and % (RFC 8493 §2.1.3), so the name itself cannot be listed; the copy in the
 * bag is named instead with every byte that is not part of a valid UTF-8 character written as %XX and every
 * "%" as %25 (so the bytes can be recovered from the name, as from a URI, RFC 3986 §2.1). The manifest then
 * lists that name with its "%" encoded once more, as §2.1.3 asks; `tidemark-names.txt` gives the bytes.
 */
export function bagNameOf(bytes: Uint8Array): string {
  let out = "";
  for (let i = 0; i < bytes.length; ) {
    const b = bytes[i];
    const length = b < 0x80 ? 1 : b >> 5 === 6 ? 2 : b >> 4 === 14 ? 3 : b >> 3 === 30 ? 4 : 0;
    const char = length > 0 && i + length <= bytes.length ? bytes.subarray(i, i + length) : null;
    if (char && isUtf8(char)) {
      out += b === 0x25 ? "%25" : Buffer.from(char).toString("utf8");
      i += length;
    } else {
      out += `%${b.toString(16).toUpperCase().padStart(2, "0")}`;
      i += 1;
    }
  }
  return out;
}

/** Lists the original bytes of payload files renamed by bagNameOf (only written when there are any). */
export const BAG_NAMES_FILE = "tidemark-names.txt";

/** Copies `file` to `target`, hashing what was written: a copy that differs from the scan is an error. */
async function copyVerified(file: BagFile, target: string): Promise<number> {
  await mkdir(path.dirname(target), { recursive: true });
  const hash = createHash("sha256");
  let bytes = 0;
  const tap = new Transform({
    transform(chunk: Buffer, _enc, done) {
      hash.update(chunk);
      bytes += chunk.length;
      done(null, chunk);
    },
  });
  await pipeline(createReadStream(file.absPath), tap, createWriteStream(target, { flags: "wx" }));
  const copied = hash.digest("hex");
  if (copied !== file.sha256) {
    throw new Error(`${file.relPath} changed between the scan and the copy into the bag (SHA-256 ${copied}, scanned ${file.sha256})`);
  }
  return bytes;
}

export interface WriteBagOptions {
  /** bag-info.txt fields after the ones written here (Source-Organization, External-Description, …). */
  info: [string, string][];
  /** Tag files to add beside the manifests, e.g. the scan report. */
  tagFiles: { name: string; text: string }[];
}

/**
 * Writes a bag of `files` into the empty or new folder `bagDir`: payload under data/, manifest-sha256.txt
 * from the scan's hashes (each copy checked against them), bagit.txt, bag-info.txt with Payload-Oxum,
 * the given tag files, and tagmanifest-sha256.txt over all tag files.
 */
/** A bag goes into a new or empty folder only: checked before a long scan, and again before writing. */
export async function assertBagTarget(bagDir: string): Promise<void> {
  const existing = await readdir(bagDir).catch((error: { code?: string }) => {
    if (error.code === "ENOENT") return [] as string[];
    throw new UsageError(`cannot write the bag into ${bagDir}: ${error.code ?? String(error)}`);
  });
  if (existing.length > 0) throw new UsageError(`--bag ${bagDir} is not empty; give a new or empty folder`);
}

export async function writeBag(bagDir: string, files: readonly BagFile[], options: WriteBagOptions): Promise<{ files: number; bytes: number }> {
  await assertBagTarget(bagDir);
  await mkdir(path.join(bagDir, "data"), { recursive: true });

  let octets = 0;
  const manifest: ManifestEntry[] = [];
  const renamed: string[] = [];
  for (const file of files) {
    const rel = `data/${file.relPath}`;
    octets += await copyVerified(file, path.join(bagDir, ...rel.split("/")));
    manifest.push({ path: rel, digest: file.sha256 });
    if (file.pathBytes) renamed.push(`${file.pathBytes} ${encodeBagPath(rel)}\n`);
  }
  const tag = new Map<string, string>([
    ["bagit.txt", bagitTxt()],
    [
      "bag-info.txt",
      formatTagFile([
        ["Bagging-Date", new Date().toISOString().slice(0, 10)],
        ["Payload-Oxum", `${octets}.${files.length}`],
        ...options.info,
      ]),
    ],
    ["manifest-sha256.txt", formatManifest(manifest)],
  ]);
  for (const t of options.tagFiles) tag.set(t.name, t.text);
  // A tag file of our own (RFC 8493 §2.2.4): each renamed payload file's original path bytes (base64), then its path in the bag.
  if (renamed.length > 0) tag.set(BAG_NAMES_FILE, renamed.join(""));
  const tagManifest: ManifestEntry[] = [];
  for (const [name, text] of tag) {
    await writeFile(path.join(bagDir, name), text, { flag: "wx" });
    tagManifest.push({ path: name, digest: createHash("sha256").update(text).digest("hex") });
  }
  await writeFile(path.join(bagDir, "tagmanifest-sha256.txt"), formatManifest(tagManifest), { flag: "wx" });
  return { files: files.length, bytes: octets };
}
