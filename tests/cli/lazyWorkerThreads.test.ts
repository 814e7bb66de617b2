/**
 * node:worker_threads loaded only when a thread starts (cli/src/scan/lazyWorkerThreads.ts; issue #22): the
 * real bundle's scan of one file, measured in its own thread with PNGs, never loads it, and a scan on the
 * worker pool still does (and measures both files), so the check below can tell the two apart.
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import path from "node:path";
import { execa } from "execa";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { bundleCli } from "../../cli/bin/bundle.mjs";
import { pinkNoise } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { repoRoot } from "./runCli.ts";

const scratchRoot = path.join(repoRoot, "tmp");
let dir: string;
let probe: string;

beforeAll(async () => {
  mkdirSync(scratchRoot, { recursive: true });
  dir = mkdtempSync(path.join(scratchRoot, "lazy-wt-"));
  // Laid out as cli/ is: the bundle reads ../package.json (its version).
  const outdir = path.join(dir, "cli", "dist");
  mkdirSync(outdir, { recursive: true });
  writeFileSync(path.join(dir, "cli", "package.json"), readFileSync(path.join(repoRoot, "cli", "package.json")));
  await bundleCli({ outdir });
  probe = path.join(dir, "modules.mjs");
  const runBundle = JSON.stringify(path.join(repoRoot, "cli", "bin", "runBundle.mjs"));
  const bin = JSON.stringify(path.join(outdir, "bin.cjs"));
  writeFileSync(
    probe,
    `import { runBundle } from ${runBundle};\nprocess.on("exit", () => process.stderr.write("MODULES " + JSON.stringify(process.moduleLoadList) + "\\n"));\nprocess.argv.splice(1, 1, ${bin});\nrunBundle(${bin});\n`,
  );
  for (const name of ["one", "two"]) {
    mkdirSync(path.join(dir, name));
    const x = pinkNoise({ sampleRateHz: 48000, seconds: 1, rmsDbfs: -20, seed: name.length });
    writeFileSync(path.join(dir, name, "a.wav"), encodeWav([x, x], { sampleRateHz: 48000, bitDepth: 24 }));
    if (name === "two") writeFileSync(path.join(dir, name, "b.wav"), encodeWav([x, x], { sampleRateHz: 48000, bitDepth: 24 }));
  }
}, 60_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function scan(folder: string, extra: string[]): Promise<{ modules: string[]; files: { error: unknown; spectrogram: string | null }[] }> {
  const report = path.join(dir, `${folder}.json`);
  const r = await execa("node", [probe, "scan", path.join(dir, folder), "--spectrograms", path.join(dir, `${folder}-png`), "--out", report, ...extra], {
    reject: false,
    env: { TIDEMARK_CODE_CACHE_DIR: "off" },
  });
  const modules = JSON.parse(/MODULES (.*)/.exec(r.stderr)?.[1] ?? "null") as string[] | null;
  expect(modules, r.stderr).not.toBeNull();
  // Exit 1: pink noise fails the default profile; the scan itself ran.
  expect([0, 1], r.stderr).toContain(r.exitCode);
  return { modules: modules ?? [], files: (JSON.parse(readFileSync(report, "utf8")) as { files: { error: unknown; spectrogram: string | null }[] }).files };
}

describe("node:worker_threads, loaded when a thread starts", () => {
  it("is not loaded by the bundle's scan of one file, which still measures and draws it", async () => {
    const { modules, files } = await scan("one", []);
    expect(files).toHaveLength(1);
    expect(files[0].error).toBeNull();
    expect(files[0].spectrogram).not.toBeNull();
    expect(modules).toContain("NativeModule crypto");
    expect(modules).not.toContain("NativeModule worker_threads");
  }, 60_000);

  it("is loaded when the scan runs its worker pool", async () => {
    const { modules, files } = await scan("two", ["--workers", "2"]);
    expect(files.map((f) => f.error)).toEqual([null, null]);
    expect(modules).toContain("NativeModule worker_threads");
  }, 60_000);
});
