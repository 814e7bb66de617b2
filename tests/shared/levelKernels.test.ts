/**
 * The level side's WebAssembly SIMD kernels (shared/src/analysis/levelKernels.wat): the inlined bytes are
 * what wabt (the WebAssembly Binary Toolkit's npm build, an independent assembler) makes of the source, and
 * every kernel gives the JavaScript loop's results bit for bit, so the accuracy tests of either path hold
 * for both.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { createLevelKernels } from "../../shared/src/analysis/levelKernels.ts";
import { LEVEL_KERNELS_BASE64 } from "../../shared/src/analysis/levelKernels.generated.ts";
import { createLoudnessMeter, type LoudnessResult } from "../../shared/src/analysis/loudness.ts";
import { compileLevelKernels, LEVEL_KERNELS_GENERATED, levelKernelsModuleText } from "../../scripts/lib/levelKernelsWasm.ts";
import { pinkNoise, sine, silence, concat } from "../fixtures/synth.ts";

describe("level kernels module", () => {
  it("is the current levelKernels.wat, assembled by wabt (else run scripts/generate-level-kernels.ts)", async () => {
    const fresh = await compileLevelKernels();
    expect(readFileSync(LEVEL_KERNELS_GENERATED, "utf8")).toBe(levelKernelsModuleText(fresh));
    expect(Buffer.from(LEVEL_KERNELS_BASE64, "base64").equals(Buffer.from(fresh))).toBe(true);
  });

  it("instantiates in Node, so the scan runs the SIMD path", () => {
    const k = createLevelKernels();
    expect(k).not.toBeNull();
    expect(typeof k?.kweightPair).toBe("function");
  });
});

interface Run {
  result: LoudnessResult;
  hops: number[];
  momentary: number[];
  shortTerm: number[];
}

function run(channels: Float32Array[], filters: "auto" | "js", blocks: number[]): Run {
  const hops: number[] = [];
  const meter = createLoudnessMeter(48000, channels.length, undefined, (end, m, s) => hops.push(end, m, s), filters);
  const n = channels[0].length;
  for (let at = 0, b = 0; at < n; b++) {
    const frames = Math.min(blocks[b % blocks.length], n - at);
    meter.push(channels.map((x) => x.subarray(at, at + frames)), frames);
    at += frames;
  }
  const result = meter.finish();
  return { result, hops, momentary: Array.from(meter.momentaryBlockPowers()), shortTerm: Array.from(meter.shortTermBlockPowers()) };
}

describe("K-weighting kernel", () => {
  const fs = 48000;
  const signals: Record<string, Float32Array[]> = {
    "stereo pink noise": [pinkNoise({ sampleRateHz: fs, seconds: 8, rmsDbfs: -20, seed: 1 }), pinkNoise({ sampleRateHz: fs, seconds: 8, rmsDbfs: -26, seed: 2 })],
    "5 channels, tones and silence": [
      sine({ frequencyHz: 997, sampleRateHz: fs, seconds: 5, peakDbfs: -6 }),
      concat(silence({ sampleRateHz: fs, seconds: 2 }), sine({ frequencyHz: 40, sampleRateHz: fs, seconds: 3, peakDbfs: -3 })),
      pinkNoise({ sampleRateHz: fs, seconds: 5, rmsDbfs: -30, seed: 3 }),
      sine({ frequencyHz: 15000, sampleRateHz: fs, seconds: 5, peakDbfs: -12 }),
      pinkNoise({ sampleRateHz: fs, seconds: 5, rmsDbfs: -40, seed: 4 }),
    ],
  };
  for (const [name, channels] of Object.entries(signals)) {
    it(`${name}: the SIMD path equals the JavaScript loops bit for bit, at any block size`, () => {
      const js = run(channels, "js", [65536]);
      expect(js.result.integratedLufs).toBeGreaterThan(-70);
      for (const blocks of [[65536], [4096], [777, 8193, 1, 20000]]) {
        const simd = run(channels, "auto", blocks);
        expect(simd.result).toEqual(js.result);
        expect(simd.momentary).toEqual(js.momentary);
        expect(simd.shortTerm).toEqual(js.shortTerm);
        expect(simd.hops).toEqual(js.hops);
      }
    });
  }
});
