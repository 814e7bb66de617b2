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

export interface CrawledFile {
  absPath: string;
  /** Relative to the crawl root, forward slashes. */
  relPath: string;
  sizeBytes: number;
  mtimeMs: number;
}

export interface CrawlProblem {
  absPath: string;
  relPath: string;
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

  const roots: { abs: string; stats: Stats; given: string }[] = [];
  for (const given of paths) {
    const abs = path.resolve(options.cwd, given);
    try {
      roots.push({ abs, stats: await stat(abs), given });
    } catch (error) {
      const errno = errnoOf(error);
      if (errno === "ENOENT" || errno === "ENOTDIR") throw new UsageError(`path not found: ${given}`);
      if (errno === "ELOOP") throw new UsageError(`path is a symbolic link loop: ${given}`);
      if (errno === "EACCES" || errno === "EPERM") throw new UsageError(`permission denied: ${given}`);
      throw new UsageError(`cannot read ${given}: ${errno ?? String(error)}`);
    }
  }
  const rootDir = commonAncestor(roots.map((r) => (r.stats.isDirectory() ? r.abs : path.dirname(r.abs))));
  const rel = (abs: string): string => toPosix(path.relative(rootDir, abs)) || path.basename(abs);

  const files = new Map<string, CrawledFile>();
  const problems = new Map<string, CrawlProblem>();
  const visitedDirs = new Set<string>();
  const problem = (abs: string, code: CrawlProblem["code"], why: string): void => {
    const relPath = rel(abs);
    problems.set(relPath, { absPath: abs, relPath, code, message: `${relPath}: ${why}` });
  };
  const addFile = (abs: string, stats: Stats): void => {
    const relPath = rel(abs);
    files.set(relPath, { absPath: abs, relPath, sizeBytes: stats.size, mtimeMs: stats.mtimeMs });
  };

  async function walk(dir: string, ancestors: ReadonlySet<string>, depth: number): Promise<void> {
    const real = await realpath(dir).catch(() => dir);
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
    let entries: Dirent[];
    try {
      entries = await readdir(dir, { withFileTypes: true });
    } catch (error) {
      const errno = errnoOf(error);
      problem(dir, errno === "EACCES" || errno === "EPERM" ? "permission-denied" : "io-error", `folder cannot be read (${errno ?? "unknown error"})`);
      return;
    }
    entries.sort((a, b) => compareReportPaths(a.name, b.name));
    const inner = new Set(ancestors).add(real);
    for (const entry of entries) {
      const abs = path.join(dir, entry.name);
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
