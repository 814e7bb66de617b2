import { execFileSync, spawnSync } from "node:child_process";
import { mkdirSync, mkdtempSync, rmSync, symlinkSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { UsageError } from "../../cli/src/errors.ts";
import { DEFAULT_INCLUDE_GLOBS } from "../../cli/src/options.ts";
import { commonAncestor, crawlFiles } from "../../cli/src/scan/crawlFiles.ts";

let root: string;
const defaults = { include: [...DEFAULT_INCLUDE_GLOBS], exclude: [] as string[] };

function touch(rel: string, bytes = 4): void {
  const file = path.join(root, rel);
  mkdirSync(path.dirname(file), { recursive: true });
  writeFileSync(file, Buffer.alloc(bytes));
}

beforeAll(() => {
  root = mkdtempSync(path.join(tmpdir(), "tidemark-crawl-"));
  touch("Ferry Terminal Interviews 1978/tape-01.wav", 10);
  touch("Ferry Terminal Interviews 1978/tape-02.WAV", 11);
  touch("Ferry Terminal Interviews 1978/tape-03.Bwf", 12);
  touch("Ferry Terminal Interviews 1978/notes.txt");
  touch("Ferry Terminal Interviews 1978/._tape-01.wav");
  touch("Lighthouse Choir Reels/reel-1.rf64");
  touch("Lighthouse Choir Reels/rejects/reel-1-old.wav");
  touch("Lighthouse Choir Reels/deep/er/reel-2.wav");
  // A loop back to the archive root, and a second way into one folder.
  symlinkSync(root, path.join(root, "Lighthouse Choir Reels", "loop"));
  symlinkSync(path.join(root, "Lighthouse Choir Reels", "deep"), path.join(root, "deep-link"));
  symlinkSync(path.join(root, "gone.wav"), path.join(root, "dangling.wav"));
  mkdirSync(path.join(root, "folder.wav"));
  execFileSync("mkfifo", [path.join(root, "pipe.wav")]);
});

afterAll(() => rmSync(root, { recursive: true, force: true }));

describe("crawlFiles", () => {
  it("finds the same audio files as GNU find -L (Debian findutils), relative, sorted by code point", async () => {
    const result = await crawlFiles([root], { ...defaults, cwd: "/" });
    // find -L follows links like the crawl does; -iname is its case-insensitive match; hidden files excluded.
    // find exits 1 after warning about the loop; its list is still complete.
    const found = spawnSync(
      "find",
      ["-L", ".", "-type", "f", "(", ...["*.wav", "*.bwf", "*.rf64", "*.flac", "*.aif", "*.aiff", "*.aifc"].flatMap((g, i) => [...(i ? ["-o"] : []), "-iname", g]), ")", "-not", "-name", ".*"],
      { cwd: root, encoding: "utf8" },
    )
      .stdout.split("\n")
      .filter(Boolean)
      .map((p) => p.replace(/^\.\//, ""))
      // find visits the linked folder twice (deep-link/…); the crawl enters each folder once.
      .filter((p) => !p.startsWith("deep-link/"));
    const expected = [...new Set(found)].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
    expect(result.rootDir).toBe(root);
    expect(result.files.map((f) => f.relPath)).toEqual(expected);
    expect(result.files.map((f) => f.relPath)).toEqual([
      "Ferry Terminal Interviews 1978/tape-01.wav",
      "Ferry Terminal Interviews 1978/tape-02.WAV",
      "Ferry Terminal Interviews 1978/tape-03.Bwf",
      "Lighthouse Choir Reels/deep/er/reel-2.wav",
      "Lighthouse Choir Reels/reel-1.rf64",
      "Lighthouse Choir Reels/rejects/reel-1-old.wav",
    ]);
    expect(result.files[0]).toMatchObject({ sizeBytes: 10, absPath: path.join(root, "Ferry Terminal Interviews 1978", "tape-01.wav") });
  });

  it("reports the loop, the dangling link, the FIFO and the folder named .wav instead of hanging or skipping silently", async () => {
    const { problems } = await crawlFiles([root], { ...defaults, cwd: "/" });
    expect(problems.map((p) => [p.relPath, p.code])).toEqual([
      ["Lighthouse Choir Reels/loop", "symlink-loop"],
      ["dangling.wav", "not-found"],
      ["folder.wav", "is-directory"],
      ["pipe.wav", "not-a-file"],
    ]);
    for (const p of problems) expect(p.message.startsWith(`${p.relPath}: `)).toBe(true);
  });

  it("prunes excluded folders and matches --include case-insensitively", async () => {
    const result = await crawlFiles([path.join(root, "Lighthouse Choir Reels")], { include: ["*.WAV"], exclude: ["rejects/**", "loop"], cwd: "/" });
    expect(result.files.map((f) => f.relPath)).toEqual(["deep/er/reel-2.wav"]);
  });

  it("makes paths relative to the common folder of several arguments, relative to cwd", async () => {
    const result = await crawlFiles(["Ferry Terminal Interviews 1978/tape-01.wav", "Lighthouse Choir Reels/deep"], { ...defaults, cwd: root });
    expect(result.rootDir).toBe(root);
    expect(result.files.map((f) => f.relPath)).toEqual(["Ferry Terminal Interviews 1978/tape-01.wav", "Lighthouse Choir Reels/deep/er/reel-2.wav"]);
  });

  it("scans a file named explicitly whatever its extension", async () => {
    const result = await crawlFiles([path.join(root, "Ferry Terminal Interviews 1978", "notes.txt")], { ...defaults, cwd: "/" });
    expect(result.files.map((f) => f.relPath)).toEqual(["notes.txt"]);
  });

  it("names a missing path in a usage error", async () => {
    await expect(crawlFiles([path.join(root, "Ferry Terminal Interviews 1979")], { ...defaults, cwd: "/" })).rejects.toThrow(
      new UsageError(`path not found: ${path.join(root, "Ferry Terminal Interviews 1979")}`),
    );
    await expect(crawlFiles(["no-such-reel"], { ...defaults, cwd: root })).rejects.toThrow(/^path not found: no-such-reel$/);
  });

  it("finds the deepest common folder", () => {
    expect(commonAncestor(["/a/b/c", "/a/b/d/e"])).toBe("/a/b");
    expect(commonAncestor(["/a/b", "/a/bc"])).toBe("/a");
    expect(commonAncestor(["/x", "/y"])).toBe("/");
    expect(commonAncestor(["/a/b"])).toBe("/a/b");
  });
});
