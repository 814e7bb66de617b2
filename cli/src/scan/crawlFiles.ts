/**
 * Finds the audio files under the paths given on the command line. Folders are walked recursively in
 * sorted order; symbolic links are followed, but a folder is never entered twice, so link loops end.
 * Paths come back relative to the common folder of the given paths, with forward slashes, sorted.
 * Anything that matches but cannot be measured (loop, dangling link, FIFO, unreadable folder) comes back
 * as a problem, so the report can say so instead of silently skipping it.
 */
import type { Dirent, Stats } from "node:fs";
import { readdir, realpath, stat } from "node:fs/promises";
import path from "node:path";
import { Minimatch } from "minimatch";
import { compareReportPaths } from "@tidemark/shared/report/assembleReport";
import { UsageError } from "../errors.ts";
import { displayPath, fileKey, joinPath, pathBytesOf, rawArgument, resolveLossyPath, type FsPath } from "./rawPath.ts";

export interface CrawledFile {
  /** A Buffer when the name is not valid UTF-8 (rawPath.ts). */
  absPath: FsPath;
  /** Relative to the crawl root, forward slashes; invalid UTF-8 shown as U+FFFD. */
  relPath: string;
  /** Exact bytes of relPath, base64, when it is not valid UTF-8 (then relPath alone is lossy). */
  pathBytes?: string;
  sizeBytes: number;
  mtimeMs: number;
}

export interface CrawlProblem {
  absPath: FsPath;
  relPath: string;
  pathBytes?: string;
  /** Same codes as the audio reader's I/O errors (cli/src/audio/errors.ts). */
  code: "symlink-loop" | "not-found" | "is-directory" | "not-a-file" | "permission-denied" | "io-error";
  message: string;
}

export interface CrawlResult {
  /** The folder every relPath is relative to. */
  rootDir: string;
  files: CrawledFile[];
  problems: CrawlProblem[];
}

export interface CrawlOptions {
  include: readonly string[];
  exclude: readonly string[];
  cwd: string;
}

/** Deeper than this is a damaged or hostile tree, not an archive. */
const MAX_DEPTH = 128;

const toPosix = (p: string): string => p.split(path.sep).join("/");

/** Deepest folder that contains all of `dirs` (absolute paths). */
export function commonAncestor(dirs: readonly string[]): string {
  const split = dirs.map((d) => path.resolve(d).split(path.sep));
  const first = split[0];
  let shared = first.length;
  for (const parts of split.slice(1)) {
    let i = 0;
    while (i < shared && i < parts.length && parts[i] === first[i]) i++;
    shared = i;
  }
  const joined = first.slice(0, shared).join(path.sep);
  return shared <= 1 ? path.parse(path.resolve(dirs[0])).root : joined;
}

function parentOf(p: FsPath): FsPath {
  if (typeof p === "string") return path.dirname(p);
  const bytes = Buffer.from(p);
  const slash = bytes.lastIndexOf(0x2f);
  return slash <= 0 ? "/" : bytes.subarray(0, slash).toString("utf8");
}

function errnoOf(error: unknown): string | undefined {
  return (error as { code?: string } | null)?.code;
}

export async function crawlFiles(paths: readonly string[], options: CrawlOptions): Promise<CrawlResult> {
  if (paths.length === 0) throw new UsageError("expected at least one file or folder to scan");
  // Hidden files (e.g. macOS "._" resource forks next to each WAV) are not audio: dot: false skips them.
  const include = options.include.map((g) => new Minimatch(g, { nocase: true, matchBase: true, dot: false }));
  const exclude = options.exclude.map((g) => new Minimatch(g, { nocase: true, matchBase: true, dot: true }));
  const isIncluded = (rel: string): boolean => include.some((m) => m.match(rel));
  const isExcluded = (rel: string, isDir: boolean): boolean =>
    exclude.some((m) => m.match(rel) || (isDir && m.match(`${rel}/`)));

  const roots: { abs: FsPath; stats: Stats; given: string }[] = [];
  for (const given of paths) {
    const resolved = path.resolve(options.cwd, given);
    try {
      const stats = await stat(resolved).catch(async (error: unknown) => {
        // A name that is not UTF-8 arrives here lossily decoded: take its bytes from the command line when the
        // process can see them, else every file whose name looks like it.
        if (errnoOf(error) !== "ENOENT" || !resolved.includes("\ufffd")) throw error;
        const exact = rawArgument(given);
        const found = exact ? [path.isAbsolute(given) ? exact : joinPath(options.cwd, exact)] : await resolveLossyPath(resolved);
        if (found.length === 0) throw error;
        for (const abs of found.slice(1)) roots.push({ abs, stats: await stat(abs), given });
        roots.push({ abs: found[0], stats: await stat(found[0]), given });
        return null;
      });
      if (stats) roots.push({ abs: resolved, stats, given });
    } catch (error) {
      const errno = errnoOf(error);
      if (errno === "ENOENT" || errno === "ENOTDIR") throw new UsageError(`path not found: ${given}`);
      if (errno === "ELOOP") throw new UsageError(`path is a symbolic link loop: ${given}`);
      if (errno === "EACCES" || errno === "EPERM") throw new UsageError(`permission denied: ${given}`);
      throw new UsageError(`cannot read ${given}: ${errno ?? String(error)}`);
    }
  }
  // Relative paths are worked out on the display form; a root folder that is not UTF-8 is shown lossily too.
  const rootDir = commonAncestor(roots.map((r) => displayPath(r.stats.isDirectory() ? r.abs : parentOf(r.abs))));
  const rel = (abs: FsPath): string => toPosix(path.relative(rootDir, displayPath(abs))) || path.basename(displayPath(abs));
  const bytesOf = (abs: FsPath): { pathBytes?: string } => {
    const pathBytes = pathBytesOf(abs, rootDir);
    return pathBytes ? { pathBytes } : {};
  };

  const files = new Map<string, CrawledFile>();
  const problems = new Map<string, CrawlProblem>();
  const visitedDirs = new Set<string>();
  const problem = (abs: FsPath, code: CrawlProblem["code"], why: string): void => {
    const relPath = rel(abs);
    const entry: CrawlProblem = { absPath: abs, relPath, ...bytesOf(abs), code, message: `${relPath}: ${why}` };
    problems.set(fileKey(entry), entry);
  };
  const addFile = (abs: FsPath, stats: Stats): void => {
    const relPath = rel(abs);
    const entry: CrawledFile = { absPath: abs, relPath, ...bytesOf(abs), sizeBytes: stats.size, mtimeMs: stats.mtimeMs };
    files.set(fileKey(entry), entry);
  };

  async function walk(dir: FsPath, ancestors: ReadonlySet<string>, depth: number): Promise<void> {
    const real = await realpath(dir, { encoding: "buffer" }).then((b) => b.toString("latin1"), () => Buffer.from(displayPath(dir)).toString("latin1"));
    if (ancestors.has(real)) {
      problem(dir, "symlink-loop", "symbolic link back into one of its own parent folders, not followed");
      return;
    }
    // Already walked through another link: once is enough.
    if (visitedDirs.has(real)) return;
    visitedDirs.add(real);
    if (depth > MAX_DEPTH) {
      problem(dir, "io-error", `folders nested deeper than ${MAX_DEPTH} levels, not walked further`);
      return;
    }
    let entries: Dirent<Buffer>[];
    try {
      // Names as bytes: a name that is not UTF-8 must be opened by its bytes, not a lossy string.
      entries = await readdir(dir, { withFileTypes: true, encoding: "buffer" });
    } catch (error) {
      const errno = errnoOf(error);
      problem(dir, errno === "EACCES" || errno === "EPERM" ? "permission-denied" : "io-error", `folder cannot be read (${errno ?? "unknown error"})`);
      return;
    }
    entries.sort((a, b) => compareReportPaths(a.name.toString("utf8"), b.name.toString("utf8")) || Buffer.compare(a.name, b.name));
    const inner = new Set(ancestors).add(real);
    for (const entry of entries) {
      const abs = joinPath(dir, entry.name);
      const relPath = rel(abs);
      let stats: Stats;
      try {
        stats = await stat(abs);
      } catch (error) {
        const errno = errnoOf(error);
        if (errno === "ELOOP") problem(abs, "symlink-loop", "symbolic link loop, not followed");
        else if (errno === "ENOENT" && entry.isSymbolicLink()) {
          if (isIncluded(relPath)) problem(abs, "not-found", "symbolic link to a missing file");
        } else if (isIncluded(relPath)) problem(abs, "io-error", `cannot be read (${errno ?? "unknown error"})`);
        continue;
      }
      if (isExcluded(relPath, stats.isDirectory())) continue;
      if (stats.isDirectory()) {
        if (isIncluded(relPath)) problem(abs, "is-directory", "a folder with an audio file's name; its contents are scanned");
        await walk(abs, inner, depth + 1);
      } else if (isIncluded(relPath)) {
        if (stats.isFile()) addFile(abs, stats);
        else problem(abs, "not-a-file", "not a regular file (device, FIFO or socket)");
      }
    }
  }

  for (const root of roots) {
    if (root.stats.isDirectory()) await walk(root.abs, new Set(), 0);
    // A file named explicitly is scanned whatever the globs say: the user asked for it.
    else if (root.stats.isFile()) addFile(root.abs, root.stats);
    else problem(root.abs, "not-a-file", "not a regular file (device, FIFO or socket)");
  }

  const byPath = (a: { relPath: string }, b: { relPath: string }): number => compareReportPaths(a.relPath, b.relPath);
  return { rootDir, files: [...files.values()].sort(byPath), problems: [...problems.values()].sort(byPath) };
}
