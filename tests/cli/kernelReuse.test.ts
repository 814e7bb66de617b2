/**
 * Issue #22: a scan hands each file's WebAssembly kernel instances on to the next file (a kernel arena per
 * file, shared/src/wasm/kernelModule.ts), zeroed. Whatever order files come in, one after another or two at
 * once as a worker runs them, every file must measure exactly as it does with instances of its own.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { concat, hardClip, mix, pinkNoise, silence, sine, whiteNoise } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { loadProfile } from "../../cli/src/profiles/loadProfile.ts";
import { readAudioFile } from "../../cli/src/audio/readAudioFile.ts";
import { analyseFile, type ScanContext } from "../../cli/src/scan/analyseFile.ts";
import { createFileAnalysis, type FileAnalysisResult } from "../../shared/src/engine/fileAnalysis.ts";

const RATE = 48000;
let dir: string;
let context: ScanContext;
const names = ["clipped.wav", "noise.wav", "quiet-then-tone.wav", "short.wav"];

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-kernel-reuse-"));
  const clipped = mix(hardClip(sine({ frequencyHz: 440, sampleRateHz: RATE, seconds: 1.2, peakDbfs: 3 })), whiteNoise({ sampleRateHz: RATE, seconds: 1.2, rmsDbfs: -50, seed: 2 }));
  writeFileSync(path.join(dir, names[0]), encodeWav([clipped, clipped], { sampleRateHz: RATE, bitDepth: 24 }));
  writeFileSync(path.join(dir, names[1]), encodeWav([pinkNoise({ sampleRateHz: RATE, seconds: 1, rmsDbfs: -20, seed: 3 }), pinkNoise({ sampleRateHz: RATE, seconds: 1, rmsDbfs: -26, seed: 4 })], { sampleRateHz: RATE, bitDepth: 24 }));
  const quiet = concat(silence({ sampleRateHz: RATE, seconds: 0.6 }), sine({ frequencyHz: 1000, sampleRateHz: RATE, seconds: 0.6, peakDbfs: -12 }));
  writeFileSync(path.join(dir, names[2]), encodeWav([quiet, quiet], { sampleRateHz: RATE, bitDepth: 16 }));
  writeFileSync(path.join(dir, names[3]), encodeWav([whiteNoise({ sampleRateHz: RATE, seconds: 0.3, rmsDbfs: -30, seed: 5 })], { sampleRateHz: RATE, bitDepth: 24 }));
  const loaded = await loadProfile("preservation-master", dir);
  // A scan's defaults: no images, the fingerprint on.
  context = { profile: loaded.profile, settings: loaded.settings, spectrograms: null, fingerprint: true, closeups: true };
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** The file measured outside any arena: every kernel instance made for it alone. */
async function fresh(name: string): Promise<FileAnalysisResult> {
  let analysis: ReturnType<typeof createFileAnalysis> | null = null;
  await readAudioFile(path.join(dir, name), {
    onOpen: (info) => {
      const a = createFileAnalysis(info.stream, context.settings, { fingerprint: true, images: false });
      analysis = a;
      return (block) => a.push(block);
    },
  });
  return (analysis as ReturnType<typeof createFileAnalysis> | null)!.finish();
}

const measure = (name: string) => analyseFile({ absPath: path.join(dir, name), relPath: name, sizeBytes: 0 }, context);

describe("kernel instances reused from file to file", () => {
  it("measures every file as with instances of its own, one after another and two at once", async () => {
    const expected = new Map<string, FileAnalysisResult>();
    for (const name of names) expected.set(name, await fresh(name));
    // The files differ (clipped, noise, silence, mono): a stale value left in a reused memory would show.
    expect(new Set(names.map((n) => expected.get(n)!.fingerprint)).size).toBe(names.length);
    const check = async (name: string) => {
      const { report } = await measure(name);
      expect(report.error).toBeNull();
      expect(report.metrics).toEqual(expected.get(name)!.metrics);
      expect(report.fingerprint).toBe(expected.get(name)!.fingerprint);
    };
    for (const name of [...names, ...names.slice().reverse()]) await check(name);
    await Promise.all(names.map(check));
    await Promise.all([check(names[1]), check(names[1]), check(names[0])]);
  });
});
