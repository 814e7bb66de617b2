/**
 * The CLI bundle's V8 code cache (cli/bin/runBundle.mjs, issue #22): whatever state the cache is in —
 * missing, corrupt, from another build of the same length, unwritable, switched off — the bundle runs and
 * gives the same output; a good cache is taken (V8's own `cachedDataRejected` says so). First on a small
 * CommonJS bundle of our own, then on the real one (cli/bin/bundle.mjs) scanning a file.
 */
import { isAscii } from "node:buffer";
import { spawnSync } from "node:child_process";
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import path from "node:path";
import { execa } from "execa";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { bundleCli } from "../../cli/bin/bundle.mjs";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { repoRoot } from "./runCli.ts";

const RUN_BUNDLE = path.join(repoRoot, "cli", "bin", "runBundle.mjs");
// Inside the repository, so the real bundle finds its unbundled packages (node_modules) from there.
const scratchRoot = path.join(repoRoot, "tmp");
let dir: string;

beforeAll(() => {
  mkdirSync(scratchRoot, { recursive: true });
  dir = mkdtempSync(path.join(scratchRoot, "code-cache-"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** A launcher as cli/bin/tidemark.js is one: answerVersion or runBundle on `bundle`, the command's arguments after it. */
function launcher(bundle: string): string {
  const file = path.join(path.dirname(bundle), "launch.mjs");
  const b = JSON.stringify(bundle);
  writeFileSync(file, `import { answerVersion, runBundle } from ${JSON.stringify(RUN_BUNDLE)};\nif (!answerVersion(${b})) runBundle(${b});\n`);
  return file;
}

async function run(launch: string, args: string[], env: Record<string, string> = {}) {
  const r = await execa("node", [launch, ...args], { reject: false, env: { TIDEMARK_DEBUG_CODE_CACHE: "1", ...env } });
  const state = /code cache: (accepted|rejected|missing|off)/.exec(r.stderr)?.[1] ?? null;
  return { exitCode: r.exitCode, stdout: r.stdout, stderr: r.stderr, state, written: /code cache: written /.test(r.stderr) };
}

describe("a small bundle", () => {
  let bundleDir: string;
  let bundle: string;
  let launch: string;
  // What bundle.mjs writes: CommonJS, then the build's id. `value` changes the build, not its length.
  const write = (value: number, id: string): void => {
    const body = [
      '"use strict";',
      'const path = require("node:path");',
      "const strict = (function () { return this === undefined; })();",
      "const code = Number(process.argv[3] ?? 0);",
      `process.stdout.write(JSON.stringify({ strict, file: path.basename(__filename), dir: __dirname === path.dirname(__filename), command: process.argv[2], value: ${value} }));`,
      "process.exitCode = code;",
    ].join("\n");
    writeFileSync(bundle, `${body}\n//# tidemarkBundleId=${id}\n`);
  };
  const caches = (): string[] => readdirSync(bundleDir).filter((f) => f.endsWith(".v8cache"));

  beforeAll(() => {
    bundleDir = path.join(dir, "small");
    mkdirSync(bundleDir);
    bundle = path.join(bundleDir, "bin.cjs");
    launch = launcher(bundle);
    write(111, "aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa");
  });

  it("runs as CommonJS under require() would (strict, its own __filename), writes the cache, then takes it", async () => {
    const first = await run(launch, ["scan"]);
    expect(first.exitCode).toBe(0);
    expect(JSON.parse(first.stdout)).toEqual({ strict: true, file: "bin.cjs", dir: true, command: "scan", value: 111 });
    expect([first.state, first.written]).toEqual(["missing", true]);
    expect(caches()).toEqual(["bin.cjs-aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa-node" + process.versions.node + "-" + process.arch + "-scan.v8cache"]);
    const second = await run(launch, ["scan"]);
    expect([second.stdout, second.state, second.written]).toEqual([first.stdout, "accepted", false]);
  });

  it("keeps one cache a command", async () => {
    const verify = await run(launch, ["verify"]);
    expect([verify.state, verify.written]).toEqual(["missing", true]);
    expect(caches().map((f) => f.replace(/.*-/, "")).sort()).toEqual(["scan.v8cache", "verify.v8cache"]);
  });

  it("rejects a corrupt cache, runs all the same and writes a good one in its place", async () => {
    const [scanCache] = caches().filter((f) => f.endsWith("-scan.v8cache"));
    const file = path.join(bundleDir, scanCache);
    const good = readFileSync(file);
    // V8's data flipped (our 12-byte header kept): V8 itself must refuse it.
    const bad = Buffer.from(good);
    for (let i = 12; i < bad.length; i += 7) bad[i] ^= 0x5a;
    writeFileSync(file, bad);
    const r = await run(launch, ["scan"]);
    expect([r.exitCode, JSON.parse(r.stdout).value, r.state, r.written]).toEqual([0, 111, "rejected", true]);
    expect((await run(launch, ["scan"])).state).toBe("accepted");
    // Not even our header: also refused, not trusted.
    writeFileSync(file, "not a cache");
    const r2 = await run(launch, ["scan"]);
    expect([JSON.parse(r2.stdout).value, r2.state, r2.written]).toEqual([111, "rejected", true]);
  });

  it("never hands a rebuilt bundle of the same length the old build's cache", async () => {
    // V8 checks only the source's length; the build id in the file name tells the builds apart.
    write(222, "bbbbbbbbbbbbbbbbbbbbbbbbbbbbbbbb");
    const r = await run(launch, ["scan"]);
    expect([JSON.parse(r.stdout).value, r.state, r.written]).toEqual([222, "missing", true]);
    expect((await run(launch, ["scan"])).state).toBe("accepted");
  });

  it("runs without a word when the cache cannot be written, and writes none after a usage error (exit 2) or when off", async () => {
    const blocker = path.join(dir, "a-file");
    writeFileSync(blocker, "");
    // A folder under a regular file: ENOTDIR even for root, who may write anywhere else.
    const unwritable = await run(launch, ["scan"], { TIDEMARK_CODE_CACHE_DIR: path.join(blocker, "cache") });
    expect([unwritable.exitCode, JSON.parse(unwritable.stdout).value, unwritable.state]).toEqual([0, 222, "missing"]);
    expect(unwritable.stderr).toMatch(/not written \(.*ENOTDIR\)/);
    const quiet = await execa("node", [launch, "scan"], { reject: false, env: { TIDEMARK_CODE_CACHE_DIR: path.join(blocker, "cache") } });
    expect([quiet.exitCode, quiet.stderr]).toEqual([0, ""]);

    const elsewhere = path.join(dir, "elsewhere");
    const usage = await run(launch, ["match", "2"], { TIDEMARK_CODE_CACHE_DIR: elsewhere });
    expect([usage.exitCode, usage.state, usage.written]).toEqual([2, "missing", false]);
    const off = await run(launch, ["scan"], { TIDEMARK_CODE_CACHE_DIR: "off" });
    expect([JSON.parse(off.stdout).value, off.state, off.written]).toEqual([222, "off", false]);
    expect(readdirSync(dir)).not.toContain("elsewhere");
  });
});

describe("the CLI's bundle", () => {
  let launch: string;
  let work: string;
  let bundleDir: string;

  beforeAll(async () => {
    // Laid out as cli/ is: the bundle reads ../package.json (its version).
    const cliCopy = path.join(dir, "cli");
    mkdirSync(cliCopy);
    writeFileSync(path.join(cliCopy, "package.json"), readFileSync(path.join(repoRoot, "cli", "package.json")));
    bundleDir = path.join(cliCopy, "dist");
    await bundleCli({ outdir: bundleDir });
    launch = launcher(path.join(bundleDir, "bin.cjs"));
    work = path.join(dir, "work");
    mkdirSync(path.join(work, "in"), { recursive: true });
    writeFileSync(path.join(work, "in", "tone.wav"), encodeWav([sine({ frequencyHz: 997, sampleRateHz: 48000, seconds: 1, peakDbfs: -12 })], { sampleRateHz: 48000, bitDepth: 24 }));
    // A FLAC too (Debian's flac): libFLAC's module carries its WebAssembly as raw text the bundle must keep.
    expect(spawnSync("flac", ["-s", "-f", path.join(work, "in", "tone.wav"), "-o", path.join(work, "in", "tone.flac")]).status).toBe(0);
  }, 120_000);

  /** The scan's report without its times, and the run's cache state. */
  async function scan(env: Record<string, string> = {}) {
    const r = await execa("node", [launch, "scan", "in", "--spectrograms", "png", "--format", "json", "--quiet"], {
      cwd: work,
      reject: false,
      env: { TIDEMARK_DEBUG_CODE_CACHE: "1", TIDEMARK_NO_CONFIG: "1", ...env },
    });
    const report = JSON.parse(r.stdout) as Record<string, unknown>;
    delete report.startedAt;
    delete report.finishedAt;
    const state = /code cache: (accepted|rejected|missing|off)/.exec(r.stderr)?.[1];
    return { exitCode: r.exitCode, report, state, png: readFileSync(path.join(work, "png", "tone.wav.png")) };
  }

  it("answers --version alone from package.json without loading the bundle", async () => {
    const version = (JSON.parse(readFileSync(path.join(repoRoot, "cli", "package.json"), "utf8")) as { version: string }).version;
    const quick = await run(launch, ["--version"]);
    expect([quick.exitCode, quick.stdout, quick.state]).toEqual([0, version, null]);
    // No cache state said: the bundle was not even read. Anything else goes to it.
    const full = await execa("node", [launch, "help"], { reject: false });
    expect(full.stdout).toMatch(/Usage: tidemark/);
  });

  it("is one ASCII CommonJS file ending in its build id, libFLAC's package beside it", () => {
    const bytes = readFileSync(path.join(bundleDir, "bin.cjs"));
    expect(bytes.toString("latin1").trimEnd()).toMatch(/\n\/\/# tidemarkBundleId=[0-9a-f]{32}$/);
    // ASCII is what lets runBundle.mjs read it as Latin-1 (bundle.mjs escapes where that changes nothing).
    expect(isAscii(bytes), "bin.cjs holds characters outside ASCII that bundle.mjs could not escape").toBe(true);
    expect(bytes.toString("latin1")).toContain('require("./libflac.cjs")');
    expect(readdirSync(bundleDir)).toContain("libflac.cjs");
  });

  it("scans alike with the cache missing, taken, corrupt and unwritable", async () => {
    const missing = await scan();
    // 0 or 1 (a failed profile) is a finished scan; every run below must end alike.
    expect([0, 1]).toContain(missing.exitCode);
    expect(missing.state).toBe("missing");
    const files = missing.report.files as { path: string; error: unknown; verdict: string }[];
    expect(files.map((f) => [f.path, f.error])).toEqual([
      ["tone.flac", null],
      ["tone.wav", null],
    ]);

    const taken = await scan();
    expect([taken.exitCode, taken.state]).toEqual([missing.exitCode, "accepted"]);
    expect(taken.report).toEqual(missing.report);
    expect(Buffer.compare(taken.png, missing.png)).toBe(0);

    const [cache] = readdirSync(bundleDir).filter((f) => f.endsWith("-scan.v8cache"));
    const bad = readFileSync(path.join(bundleDir, cache));
    for (let i = 12; i < bad.length; i += 5) bad[i] ^= 0xa5;
    writeFileSync(path.join(bundleDir, cache), bad);
    const corrupt = await scan();
    expect([corrupt.exitCode, corrupt.state]).toEqual([missing.exitCode, "rejected"]);
    expect(corrupt.report).toEqual(missing.report);

    const blocker = path.join(dir, "blocks-cache");
    writeFileSync(blocker, "");
    const unwritable = await scan({ TIDEMARK_CODE_CACHE_DIR: path.join(blocker, "x") });
    expect([unwritable.exitCode, unwritable.state]).toEqual([missing.exitCode, "missing"]);
    expect(unwritable.report).toEqual(missing.report);
  }, 120_000);
});
