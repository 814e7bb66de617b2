/**
 * File names are bytes on POSIX file systems; not every name is UTF-8 (Latin-1 names from old archives,
 * damaged names). Such a file is opened through a Buffer path (a string would be decoded lossily and not
 * found), shown with U+FFFD in place of the bad bytes, and identified exactly by `pathBytes`: the relative
 * path's raw bytes in base64, present only when they are not valid UTF-8.
 */
import { isUtf8 } from "node:buffer";
import { readFileSync } from "node:fs";
import { readdir, stat } from "node:fs/promises";
import path from "node:path";

/** What node:fs opens: a string when the path is valid UTF-8, otherwise its raw bytes. */
export type FsPath = string | Buffer;

export function toBytes(p: FsPath | Uint8Array): Buffer {
  return typeof p === "string" ? Buffer.from(p, "utf8") : Buffer.isBuffer(p) ? p : Buffer.from(p.buffer, p.byteOffset, p.byteLength);
}

/** A path that crossed a worker boundary: structured cloning turns a Buffer into a plain Uint8Array. */
export function revivePath(p: string | Uint8Array): FsPath {
  return typeof p === "string" ? p : toBytes(p);
}

/** A string when the bytes are valid UTF-8 (so the common case stays a plain string path). */
export function fromBytes(bytes: Buffer): FsPath {
  return isUtf8(bytes) ? bytes.toString("utf8") : bytes;
}

/** For people: invalid UTF-8 sequences become U+FFFD (WHATWG decoding, as Node's Buffer does it). */
export function displayPath(p: FsPath): string {
  return typeof p === "string" ? p : toBytes(p).toString("utf8");
}

export function joinPath(dir: FsPath, name: Buffer | string): FsPath {
  if (typeof dir === "string" && typeof name === "string") return path.join(dir, name);
  const d = toBytes(dir);
  const n = typeof name === "string" ? Buffer.from(name, "utf8") : name;
  const separator = d.length > 0 && d[d.length - 1] === 0x2f ? Buffer.alloc(0) : Buffer.from("/");
  return fromBytes(Buffer.concat([d, separator, n]));
}

/**
 * The raw bytes of `abs` relative to `rootDir` (a valid-UTF-8 folder), base64, or undefined when the path is
 * valid UTF-8 and its display string says it exactly.
 */
export function pathBytesOf(abs: FsPath, rootDir: string): string | undefined {
  if (typeof abs === "string") return undefined;
  const bytes = toBytes(abs);
  const root = Buffer.from(rootDir.endsWith("/") ? rootDir : `${rootDir}/`, "utf8");
  const rel = bytes.subarray(0, root.length).equals(root) ? bytes.subarray(root.length) : bytes;
  return rel.toString("base64");
}

/**
 * The key a file is matched on across reports, resume state and crawls: exact bytes when the name needs them
 * (NUL, which no path holds, then the base64 with "/" as "_", so the key is one path segment).
 */
export function fileKey(file: { path?: string; relPath?: string; pathBytes?: string | undefined }): string {
  return file.pathBytes ? `\u0000${file.pathBytes.replaceAll("/", "_")}` : (file.relPath ?? file.path ?? "");
}

let rawArgs: Map<string, Buffer[]> | null = null;

/**
 * The command-line arguments as the shell passed them, by their lossy form (Linux /proc/self/cmdline; empty
 * elsewhere): the user's arguments are the last process.argv.length − 2 entries.
 */
function rawArguments(): Map<string, Buffer[]> {
  if (rawArgs) return rawArgs;
  rawArgs = new Map();
  try {
    const cmdline = readFileSync("/proc/self/cmdline");
    const entries: Buffer[] = [];
    let start = 0;
    for (let i = 0; i < cmdline.length; i++) {
      if (cmdline[i] === 0) {
        entries.push(cmdline.subarray(start, i));
        start = i + 1;
      }
    }
    const user = process.argv.slice(2);
    const tail = entries.slice(entries.length - user.length);
    if (tail.length === user.length && tail.every((b, i) => b.toString("utf8") === user[i])) {
      for (const b of tail) rawArgs.set(b.toString("utf8"), [...(rawArgs.get(b.toString("utf8")) ?? []), b]);
    }
  } catch {
    // No /proc: look-alike names are resolved by listing folders instead.
  }
  return rawArgs;
}

/** The exact bytes of a command-line argument that arrived lossily decoded, when the process can see them. */
export function rawArgument(given: string): Buffer | null {
  const found = rawArguments().get(given);
  // Two arguments that look the same cannot be told apart from their lossy form.
  return found && found.length === 1 && !isUtf8(found[0]) ? found[0] : null;
}

/**
 * A path typed on the command line reaches Node decoded as UTF-8, so a Latin-1 name arrives with U+FFFD and
 * cannot be opened as given. Resolves each component that holds U+FFFD by listing its folder as bytes and
 * keeping the entries whose display form matches: every existing file the argument can have named.
 */
export async function resolveLossyPath(absolute: string): Promise<FsPath[]> {
  if (!absolute.includes("\ufffd")) return [absolute];
  const parts = absolute.split("/").filter((p) => p !== "");
  let candidates: FsPath[] = ["/"];
  for (const part of parts) {
    const next: FsPath[] = [];
    for (const dir of candidates) {
      if (!part.includes("\ufffd")) {
        next.push(joinPath(dir, part));
        continue;
      }
      const names = await readdir(dir, { encoding: "buffer" }).catch(() => [] as Buffer[]);
      for (const name of names) if (name.toString("utf8") === part) next.push(joinPath(dir, name));
    }
    candidates = next;
    if (candidates.length === 0) break;
  }
  return candidates;
}

/**
 * The files a path typed on the command line names: itself when it exists (or has no U+FFFD); otherwise, for
 * a name that arrived lossily decoded, its exact bytes from the command line, or every file that looks like it.
 */
export async function argumentPaths(given: string, cwd: string): Promise<FsPath[]> {
  const resolved = path.resolve(cwd, given);
  if (!resolved.includes("\ufffd")) return [resolved];
  const exists = await stat(resolved).then(
    () => true,
    () => false,
  );
  if (exists) return [resolved];
  const exact = rawArgument(given);
  if (exact) return [path.isAbsolute(given) ? exact : joinPath(cwd, exact)];
  return resolveLossyPath(resolved);
}
