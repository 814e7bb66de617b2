/**
 * Issue #22: one file's spectral side on a second thread (cli/src/scan/spectralThreadClient.ts) must give
 * the one-thread result to the bit: every report field, the fingerprint, and every PNG and JSON artefact
 * byte for byte. The files carry what each side measures: clipping, a dropout, a near-full-scale sample,
 * a tone for the spectrum, an odd channel count (the fingerprint pairs channels), float samples with a
 * NaN, and blocks that end short of the ring's slot. pngjs (npm) checks the PNGs decode.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from "node:fs";
import { availableParallelism, tmpdir } from "node:os";
import path from "node:path";
import { PNG } from "pngjs";
import { Worker } from "node:worker_threads";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { hardClip, mix, pinkNoise, sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { loadProfile } from "../../cli/src/profiles/loadProfile.ts";
import { analyseFile, type ScanContext } from "../../cli/src/scan/analyseFile.ts";
import { allocateBlockRing, consumeBlockRing, createBlockRingWriter, DECODING_READER_RING_BUDGET_BYTES, RING_FAILED, RING_STATE_INDEX, ringSlotsFor } from "../../cli/src/scan/blockRing.ts";
import { runScan } from "../../cli/src/scan/runScan.ts";
import type { AudioBlock } from "../../shared/src/types/analysis.ts";

const hasFlac = spawnSync("flac", ["--version"], { stdio: "ignore" }).status === 0;
let dir: string;
let context: ScanContext;
const RATE = 48000;

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-split-"));
  const seconds = 12.3; // 590 400 frames: the last 65 536-frame block is short
  const left = mix(pinkNoise({ sampleRateHz: RATE, seconds, rmsDbfs: -22, seed: 3 }), sine({ frequencyHz: 1000, sampleRateHz: RATE, seconds, peakDbfs: -30 }));
  const right = pinkNoise({ sampleRateHz: RATE, seconds, rmsDbfs: -22, seed: 4 });
  for (const x of [left, right]) x.fill(0, 6 * RATE, 6 * RATE + Math.round(0.04 * RATE));
  left[9 * RATE + 77] = 0.999;
  const clipped = hardClip(sine({ frequencyHz: 440, sampleRateHz: RATE, seconds, peakDbfs: 3 }));
  writeFileSync(path.join(dir, "faults.wav"), encodeWav([left, right, clipped], { sampleRateHz: RATE, bitDepth: 24 }));
  const float = pinkNoise({ sampleRateHz: 44100, seconds: 3, rmsDbfs: -18, seed: 9 });
  float[1000] = Number.NaN;
  writeFileSync(path.join(dir, "float.wav"), encodeWav([float, float], { sampleRateHz: 44100, bitDepth: 32, encoding: "float" }));
  // The same audio as FLAC (Debian's flac): there the second thread measures everything.
  if (hasFlac) execFileSync("flac", ["-s", "-f", "--channel-map=none", path.join(dir, "faults.wav"), "-o", path.join(dir, "faults.flac")]);
  const loaded = await loadProfile("preservation-master", dir);
  // Files of any length get the second thread here (a scan gives it to files of a minute and more).
  context = { profile: loaded.profile, settings: { ...loaded.settings, spectrogram: { ...loaded.settings.spectrogram, width: 400, height: 200 } }, spectrograms: { dirAbs: path.join(dir, "png"), dirShown: "png" }, fingerprint: true, closeups: true, spectralThreadMinSeconds: 0 };
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** The report and every artefact written beside it, read back before the next run overwrites them. */
async function scanOnce(name: string, spectralThread: boolean) {
  rmSync(path.join(dir, "png"), { recursive: true, force: true });
  const result = await analyseFile({ absPath: path.join(dir, name), relPath: name, sizeBytes: 0 }, { ...context, spectralThread });
  const artefacts = new Map<string, Buffer>();
  for (const f of readdirSync(path.join(dir, "png"), { recursive: true, withFileTypes: true })) {
    if (f.isFile()) artefacts.set(path.relative(dir, path.join(f.parentPath, f.name)), readFileSync(path.join(f.parentPath, f.name)));
  }
  return { report: result.report, artefacts, timings: result.timingsMs };
}

describe("the spectral side on a second thread", () => {
  it.each(["faults.wav", "float.wav"])("gives %s the one-thread report and artefacts to the bit", async (name) => {
    const one = await scanOnce(name, false);
    const two = await scanOnce(name, true);
    expect(one.report.error).toBeNull();
    expect(two.report).toEqual(one.report);
    // toEqual treats -0 and 0 alike and NaN as NaN; the JSON text is what the report file holds.
    expect(JSON.stringify(two.report)).toBe(JSON.stringify(one.report));
    expect([...two.artefacts.keys()].sort()).toEqual([...one.artefacts.keys()].sort());
    for (const [file, bytes] of one.artefacts) expect(two.artefacts.get(file)?.equals(bytes), file).toBe(true);
    const spectrogram = [...two.artefacts.keys()].find((f) => f.endsWith(`${name}.png`))!;
    expect(PNG.sync.read(two.artefacts.get(spectrogram)!).width).toBe(400);
    // The other thread's own timings come back with its result.
    expect(two.timings.spectral).toBeGreaterThan(0);
    expect(two.timings.fingerprint).toBeGreaterThan(0);
    expect(two.timings.spectralThreads).toBe(1);
    expect(two.timings.secondThreadAll).toBe(0);
    expect(one.timings.spectralThreads).toBe(0);
  }, 60_000);

  it.runIf(hasFlac)("gives a FLAC file, measured wholly on the other thread, the one-thread report and artefacts to the bit", async () => {
    const one = await scanOnce("faults.flac", false);
    const two = await scanOnce("faults.flac", true);
    expect(one.report.error).toBeNull();
    expect(one.report.findings.map((f) => f.code)).toContain("dropout");
    expect(one.report.closeups?.length ?? 0).toBeGreaterThan(0);
    expect(JSON.stringify(two.report)).toBe(JSON.stringify(one.report));
    expect([...two.artefacts.keys()].sort()).toEqual([...one.artefacts.keys()].sort());
    for (const [file, bytes] of one.artefacts) expect(two.artefacts.get(file)?.equals(bytes), file).toBe(true);
    expect(two.timings.spectralThreads).toBe(1);
    expect(two.timings.secondThreadAll).toBe(1);
    // Its analysers' timings came back from that thread.
    expect(two.timings.level).toBeGreaterThan(0);
    expect(two.timings.closeups).toBeGreaterThan(0);
  }, 60_000);

  it("gives the same report without images", async () => {
    const task = { absPath: path.join(dir, "faults.wav"), relPath: "faults.wav", sizeBytes: 0 };
    const one = await analyseFile(task, { ...context, spectrograms: null, spectralThread: false });
    const two = await analyseFile(task, { ...context, spectrograms: null, spectralThread: true });
    expect(two.report.spectrogram).toBeNull();
    expect(JSON.stringify(two.report)).toBe(JSON.stringify(one.report));
    expect(two.timingsMs.spectralThreads).toBe(1);
  }, 60_000);

  it("draws per-channel spectrograms from the other thread's grids, byte for byte", async () => {
    const perChannel = { ...context.settings, spectrogram: { ...context.settings.spectrogram, perChannel: true } };
    const saved = context;
    context = { ...context, settings: perChannel };
    try {
      const one = await scanOnce("faults.wav", false);
      const two = await scanOnce("faults.wav", true);
      expect(JSON.stringify(two.report)).toBe(JSON.stringify(one.report));
      expect([...one.artefacts.keys()].filter((f) => /\.ch\d\.png$/.test(f))).toHaveLength(3);
      for (const [file, bytes] of one.artefacts) expect(two.artefacts.get(file)?.equals(bytes), file).toBe(true);
      expect(two.timings.spectralThreads).toBe(1);
    } finally {
      context = saved;
    }
  }, 60_000);

  it("finds the faults it was given (so the comparison above compares something)", async () => {
    const { report } = await scanOnce("faults.wav", true);
    const codes = new Set(report.findings.map((f) => f.code));
    expect(codes.has("clipping")).toBe(true);
    expect(codes.has("dropout")).toBe(true);
    expect(report.fingerprint).toMatch(/\S{40,}/);
    expect(Math.abs(report.metrics!.dominantFrequencyHz! - 440)).toBeLessThan(30);
    expect(report.closeups?.length ?? 0).toBeGreaterThan(0);
  }, 60_000);
});

describe("which files get the second thread", () => {
  it("leaves files shorter than the minimum on one thread", async () => {
    const task = { absPath: path.join(dir, "float.wav"), relPath: "float.wav", sizeBytes: 0 };
    const short = await analyseFile(task, { ...context, spectralThread: true, spectralThreadMinSeconds: 3.5 });
    const long = await analyseFile(task, { ...context, spectralThread: true, spectralThreadMinSeconds: 2.5 });
    expect(short.timingsMs.spectralThreads).toBe(0);
    expect(long.timingsMs.spectralThreads).toBe(1);
    expect(JSON.stringify(long.report)).toBe(JSON.stringify(short.report));
  }, 60_000);
});

describe("runScan's choice (spectralThreadRule.ts, tested alone in spectralThreadRule.test.ts)", () => {
  /** Runs one file through runScan and returns the stage times it appends for the benchmark. */
  async function threadsOfOneFileScan(spectralThread: boolean | undefined, workers: number): Promise<number> {
    const timings = path.join(dir, `stages-${String(spectralThread)}-${workers}.jsonl`);
    const saved = process.env.TIDEMARK_STAGE_TIMINGS;
    process.env.TIDEMARK_STAGE_TIMINGS = timings;
    try {
      const name = "faults.wav";
      const files = [{ absPath: path.join(dir, name), relPath: name, sizeBytes: statSync(path.join(dir, name)).size, mtimeMs: 0 }];
      const progress = { grow() {}, fileStarted() {}, fileBytes() {}, fileDone() {}, note() {}, stop() {} };
      const interruption = { requested: false, immediate: false, onImmediate() {}, dispose() {} };
      const result = await runScan({ files, workers, spectralThread, context: { ...context, spectrograms: null }, resume: null, progress, interruption });
      expect(result.reports[0].error).toBeNull();
      const line = JSON.parse(readFileSync(timings, "utf8").trim()) as { timingsMs: { spectralThreads: number } };
      return line.timingsMs.spectralThreads;
    } finally {
      if (saved === undefined) delete process.env.TIDEMARK_STAGE_TIMINGS;
      else process.env.TIDEMARK_STAGE_TIMINGS = saved;
    }
  }

  it("follows --spectral-thread and --no-spectral-thread", async () => {
    expect(await threadsOfOneFileScan(false, 1)).toBe(0);
    expect(await threadsOfOneFileScan(true, 1)).toBe(1);
  }, 60_000);

  it.runIf(availableParallelism() >= 2)("gives one file on one worker the second thread by default when there is a core for it", async () => {
    expect(await threadsOfOneFileScan(undefined, 1)).toBe(1);
  }, 60_000);
});

describe("a spectral side that fails", () => {
  it("reports the same analysis error as one thread, without waiting on the ring", async () => {
    // An FFT size that is not a power of two: only the spectral side refuses it, once the file is open.
    const broken = { ...context, settings: { ...context.settings, fftSize: 1000 } };
    const task = { absPath: path.join(dir, "faults.wav"), relPath: "faults.wav", sizeBytes: 0 };
    const one = await analyseFile(task, { ...broken, spectralThread: false });
    const started = performance.now();
    const two = await analyseFile(task, { ...broken, spectralThread: true });
    expect(one.report.error).toEqual({ code: "analysis-failed", message: expect.stringContaining("fftSize must be a power of two > 1, got 1000") });
    expect(two.report).toEqual(one.report);
    // The reading thread learns of the failure from the ring at once, not after its stall limit (120 s).
    expect(performance.now() - started).toBeLessThan(30_000);
  }, 60_000);

  it.runIf(hasFlac)("reports the same error when the other thread measures everything (FLAC)", async () => {
    const broken = { ...context, settings: { ...context.settings, fftSize: 1000 } };
    const task = { absPath: path.join(dir, "faults.flac"), relPath: "faults.flac", sizeBytes: 0 };
    const one = await analyseFile(task, { ...broken, spectralThread: false });
    const two = await analyseFile(task, { ...broken, spectralThread: true });
    expect(one.report.error).toEqual({ code: "analysis-failed", message: expect.stringContaining("fftSize must be a power of two > 1, got 1000") });
    expect(two.report).toEqual(one.report);
  }, 60_000);
});

describe("block ring", () => {
  const block = (startFrame: number, frames: number, value: number): AudioBlock => ({ channels: [new Float32Array(frames).fill(value), new Float32Array(frames).fill(-value)], frames, startFrame });

  it("hands the blocks over in order, then ends", () => {
    const ring = allocateBlockRing({ channels: 2, slotFrames: 16, slots: 4 });
    const writer = createBlockRingWriter(ring);
    for (let i = 0; i < 3; i++) writer.push(block(i * 16, i === 2 ? 5 : 16, i + 1));
    writer.end();
    const seen: [number, number, number, number][] = [];
    expect(consumeBlockRing(ring, (b) => seen.push([b.startFrame, b.frames, b.channels[0][b.frames - 1], b.channels[1][0]]))).toBe(true);
    expect(seen).toEqual([
      [0, 16, 1, -1],
      [16, 16, 2, -2],
      [32, 5, 3, -3],
    ]);
  });

  it("stays within its memory budget: 8 slots of 65536 stereo frames, 16 for a decoding reader (FLAC), fewer for wide files, never under 2", () => {
    const bytes = (channels: number, frames: number, slots: number): number => channels * frames * 4 * slots;
    expect(ringSlotsFor(2, 65536)).toBe(8);
    expect(ringSlotsFor(2, 65536, true)).toBe(16);
    expect(bytes(2, 65536, ringSlotsFor(2, 65536, true))).toBeLessThanOrEqual(DECODING_READER_RING_BUDGET_BYTES);
    // 8 channels: 2 MiB a slot, so 4 within either budget (8 MiB); 64 channels: the floor of 2.
    expect(ringSlotsFor(8, 65536, true)).toBe(4);
    expect(ringSlotsFor(8, 65536)).toBe(4);
    expect(ringSlotsFor(64, 65536, true)).toBe(2);
  });

  it("keeps to 8 slots until the consumer has taken a block, so a consumer that fails while setting up stops the reader", async () => {
    const ring = allocateBlockRing({ channels: 2, slotFrames: 16, slots: 16 });
    const writer = createBlockRingWriter(ring);
    for (let i = 0; i < 8; i++) writer.push(block(i * 16, 16, 1));
    // A consumer that fails 200 ms from now without taking a block (its setup failed).
    const consumer = new Worker(
      `const { workerData } = require("node:worker_threads");
       setTimeout(() => { const c = new Int32Array(workerData.control); Atomics.store(c, ${RING_STATE_INDEX}, ${RING_FAILED}); Atomics.notify(c, 1); }, 200);`,
      { eval: true, workerData: ring },
    );
    try {
      // With all 16 slots open at once this push would return, and a short file end before the failure shows.
      expect(() => writer.push(block(128, 16, 1))).toThrow(/consumer thread failed/);
    } finally {
      await consumer.terminate();
    }
  });

  it("refuses a block larger than a slot, and a block with the wrong channel count", () => {
    const writer = createBlockRingWriter(allocateBlockRing({ channels: 2, slotFrames: 16, slots: 2 }));
    expect(() => writer.push(block(0, 17, 1))).toThrow(/holds 16 frames, the block has 17/);
    expect(() => writer.push({ channels: [new Float32Array(4)], frames: 4, startFrame: 0 })).toThrow(/expected 2 channels, got 1/);
  });

  it("releases the writer when the consumer fails, and the consumer when the writer aborts", () => {
    const ring = allocateBlockRing({ channels: 2, slotFrames: 16, slots: 2 });
    const writer = createBlockRingWriter(ring);
    writer.push(block(0, 16, 1));
    writer.push(block(16, 16, 1));
    expect(() =>
      consumeBlockRing(ring, () => {
        throw new Error("analyser broke");
      }),
    ).toThrow("analyser broke");
    expect(writer.failed).toBe(true);
    // The ring is full and its reader gone: a push must fail at once instead of waiting.
    expect(() => writer.push(block(32, 16, 1))).toThrow(/consumer thread failed/);

    const other = allocateBlockRing({ channels: 2, slotFrames: 16, slots: 2 });
    const w = createBlockRingWriter(other);
    w.push(block(0, 16, 1));
    w.abort();
    let blocks = 0;
    expect(consumeBlockRing(other, () => blocks++)).toBe(false);
    expect(blocks).toBe(1);
  });
});
