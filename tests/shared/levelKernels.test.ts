/**
 * The level side's WebAssembly SIMD kernels (shared/src/analysis/levelKernels.wat): every kernel gives the
 * JavaScript loop's results bit for bit, so the accuracy tests of either path hold for both. (That the
 * generated module is the .wat as it stands is checked with the others in wasmKernels.test.ts.)
 */
import { describe, expect, it } from "vitest";
import { createLevelKernels } from "../../shared/src/analysis/levelKernels.ts";
import { createClickDetector } from "../../shared/src/analysis/clicks.ts";
import { createLoudnessMeter, type LoudnessResult } from "../../shared/src/analysis/loudness.ts";
import { createTruePeakMeter, designInterpolationFilter, flagByBits } from "../../shared/src/analysis/truePeak.ts";
import { createValueRunTracker, type ValueRun } from "../../shared/src/analysis/valueRuns.ts";
import { createLevelWindows } from "../../shared/src/analysis/levelWindows.ts";
import { concat, pinkNoise, seededRandom, silence, sine, speechLike } from "../fixtures/synth.ts";

describe("level kernels module", () => {
  it("instantiates in Node, so the scan runs the SIMD path, with the memory asked for up front", () => {
    const k = createLevelKernels(200000);
    expect(k).not.toBeNull();
    expect(typeof k?.kweightPair).toBe("function");
    // Whole 64 KiB WebAssembly pages, at least the bytes asked for.
    expect(k?.memory.buffer.byteLength).toBe(4 * 65536);
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

describe("click pre-screen kernel", () => {
  /** clicks.ts's JavaScript first pass over x[first, first + count) in chunks of L: Σ|d| and max |d|. */
  function reference(x: Float32Array, first: number, count: number, L: number): { sums: number[]; maxima: number[] } {
    const sums: number[] = [];
    const maxima: number[] = [];
    for (let from = first; from < first + count; from += L) {
      const to = Math.min(first + count, from + L);
      let sumA = 0;
      let sumB = 0;
      let max = 0;
      let n = from;
      for (; n + 1 < to; n += 2) {
        const v = Math.abs(x[n] - 2 * x[n - 1] + x[n - 2]);
        const w = Math.abs(x[n + 1] - 2 * x[n] + x[n - 1]);
        sumA += v;
        sumB += w;
        if (v > max) max = v;
        if (w > max) max = w;
      }
      if (n < to) {
        const v = Math.abs(x[n] - 2 * x[n - 1] + x[n - 2]);
        sumA += v;
        if (v > max) max = v;
      }
      sums.push(sumA + sumB);
      maxima.push(max);
    }
    return { sums, maxima };
  }

  it("gives the JavaScript pass's chunk sums and maxima bit for bit, for even and odd chunks and a short last one", () => {
    const samples = 4000;
    const k = createLevelKernels(20 * samples);
    if (!k) throw new Error("no WebAssembly SIMD in this runtime");
    const x = new Float32Array(k.memory.buffer, 0, samples);
    const random = seededRandom(11);
    for (let i = 0; i < samples; i++) x[i] = Math.fround((random() - 0.5) * (i % 97 === 0 ? 1.5 : 0.2));
    const out = new Float64Array(k.memory.buffer, 4 * samples, 2 * samples);
    for (const [first, count, L] of [[2, 3000, 120], [16, 2753, 55], [5, 1, 20], [9, 2, 20], [3, 3, 20], [16, 997, 16]]) {
      const chunks = Math.ceil(count / L);
      k.diffChunks(4 * first, count, L, 4 * samples, 4 * samples + 8 * chunks);
      const want = reference(x, first, count, L);
      expect(Array.from(out.subarray(0, chunks))).toEqual(want.sums);
      expect(Array.from(out.subarray(chunks, 2 * chunks))).toEqual(want.maxima);
      expect(want.maxima.every((m) => m > 0)).toBe(true);
    }
  });

  /** Speech-like sound with 40 single-sample clicks at seeded places, and a stretch of silence. */
  function clicked(rateHz: number, seed: number): Float32Array {
    const x = concat(speechLike({ sampleRateHz: rateHz, seconds: 6, rmsDbfs: -24, seed }), silence({ sampleRateHz: rateHz, seconds: 0.5 }), pinkNoise({ sampleRateHz: rateHz, seconds: 2, rmsDbfs: -30, seed }));
    const random = seededRandom(seed + 1);
    for (let k = 0; k < 40; k++) x[Math.floor(random() * (x.length - 10))] += random() < 0.5 ? 0.3 : -0.3;
    return x;
  }
  // 48 kHz and 44.1 kHz make even chunks of the pre-screen (120 and 110 samples), 22.05 kHz odd ones (55).
  for (const rateHz of [48000, 44100, 22050]) {
    it(`${rateHz} Hz: the SIMD path finds the JavaScript path's clicks, with the same prominence, at any block size`, () => {
      const channels = [clicked(rateHz, 3), clicked(rateHz, 7)];
      const detect = (kernels: "auto" | "js", block: number) => {
        const d = createClickDetector(rateHz, 2, { clickThresholdDb: 40 }, null, kernels);
        for (let at = 0; at < channels[0].length; at += block) {
          const n = Math.min(block, channels[0].length - at);
          d.push(channels.map((x) => x.subarray(at, at + n)), n);
        }
        return d.finish();
      };
      const js = detect("js", 65536);
      expect(js.counts[0] + js.counts[1]).toBeGreaterThan(40);
      for (const block of [65536, 1000, 4097]) expect(detect("auto", block)).toEqual(js);
    });
  }
});

describe("true-peak flagging kernel", () => {
  it("writes the JavaScript pass's candidate ranges, for any length and threshold", () => {
    const length = 3000;
    const k = createLevelKernels(4 * length + 4 * 2 * length);
    if (!k) throw new Error("no WebAssembly SIMD in this runtime");
    const x = new Float32Array(k.memory.buffer, 0, length);
    const bits = new Int32Array(k.memory.buffer, 0, length);
    const ranges = new Int32Array(k.memory.buffer, 4 * length, 2 * length);
    const random = seededRandom(5);
    for (let i = 0; i < length; i++) x[i] = Math.fround((random() - 0.5) * (i % 500 < 250 ? 0.3 : 1));
    const want = new Int32Array(2 * length);
    let nonEmpty = 0;
    for (const threshold of [0.01, 0.2, 0.4, 0.49, 0.6]) {
      const thresholdBits = new Int32Array(Float32Array.of(threshold).buffer)[0];
      for (const end of [length, 2999, 2998, 2997, 12, 11, 3]) {
        const count = flagByBits(bits, 11, end, 12, thresholdBits, want);
        expect(k.flagBits(0, 11, end, 12, thresholdBits, 4 * length)).toBe(count);
        expect(Array.from(ranges.subarray(0, count))).toEqual(Array.from(want.subarray(0, count)));
        if (count > 2) nonEmpty++;
      }
    }
    expect(nonEmpty).toBeGreaterThan(10);
  });

  it("the per-output bound stops at the outputs whose bound around their centre samples exceeds the maximum", () => {
    const length = 4000;
    const k = createLevelKernels(4 * length + 4 * 64 + 64);
    if (!k) throw new Error("no WebAssembly SIMD in this runtime");
    const x = new Float32Array(k.memory.buffer, 0, length);
    const random = seededRandom(13);
    // Smooth noise with a few sharp steps, so some outputs' bounds are high and most are low.
    let v = 0;
    for (let i = 0; i < length; i++) x[i] = v = 0.9 * v + 0.1 * (random() - 0.5) + (i % 301 === 0 ? 0.8 : 0);
    const tapMax = designInterpolationFilter(8).tapMax;
    const slack = 1 + 1e-9;
    const g = Array.from({ length: 6 }, (_, j) => Math.max(tapMax[j], tapMax[11 - j]) * slack);
    const gAt = 4 * length + 4 * 64;
    new Float64Array(k.memory.buffer, gAt, 7).set([...g, slack]);
    const local = (n: number): number => {
      const m = 0.5 * (x[n - 5] + x[n - 6]);
      let b = Math.abs(m) * slack + g[5] * Math.abs(x[n - 5] - x[n - 6]);
      for (let j = 0; j < 5; j++) b += g[j] * (Math.abs(x[n - j] - m) + Math.abs(x[n - 11 + j] - m));
      return b;
    };
    const rangeList = [11, 40, 100, 101, 200, 777, 900, 3999];
    new Int32Array(k.memory.buffer, 4 * length, rangeList.length).set(rangeList);
    let stops = 0;
    for (const best of [0.05, 0.2, 0.4, 0.8]) {
      // Walk the ranges as the meter does, and as a plain loop over every output would.
      const want: number[] = [];
      for (let r = 0; r < rangeList.length; r += 2) for (let n = rangeList[r]; n < rangeList[r + 1]; n++) if (local(n) > best) want.push(n);
      const got: number[] = [];
      let r = 0;
      let n = rangeList[0];
      for (;;) {
        n = k.localBounds(0, 4 * length, rangeList.length, r, n, best, gAt);
        if (n < 0) break;
        got.push(n);
        while (rangeList[r + 1] <= n) r += 2;
        if (++n >= rangeList[r + 1]) {
          r += 2;
          if (r >= rangeList.length) break;
          n = rangeList[r];
        }
      }
      expect(got).toEqual(want);
      stops += got.length;
    }
    expect(stops).toBeGreaterThan(20);
  });

  it("a meter using it reads what the JavaScript meter reads, value and position, on rising bursts", () => {
    const fs = 48000;
    const random = seededRandom(9);
    const x = pinkNoise({ sampleRateHz: fs, seconds: 6, rmsDbfs: -30, seed: 8 });
    // Louder and louder bursts, so the running maximum keeps moving and the flagging keeps mattering.
    for (let b = 0; b < 30; b++) {
      const at = Math.floor(random() * (x.length - 100));
      for (let i = 0; i < 40; i++) x[at + i] += (0.02 + 0.03 * b) * Math.sin(i * 2.6);
    }
    const measure = (kernels: "auto" | "js", block: number) => {
      const m = createTruePeakMeter(fs, 1, kernels);
      for (let at = 0; at < x.length; at += block) m.push([x.subarray(at, Math.min(x.length, at + block))], Math.min(block, x.length - at));
      return m.finish();
    };
    const js = measure("js", 65536);
    for (const block of [65536, 5000, 333]) expect(measure("auto", block)).toEqual(js);
  });
});

describe("equal-neighbour kernel", () => {
  it("the value-run tracker finds the JavaScript path's runs, in the same order (zeros, ±0, stuck values, NaN, 8-bit steps)", () => {
    const random = seededRandom(21);
    const n = 100000;
    const make = (quantum: number) => {
      const x = new Float32Array(n);
      for (let i = 0; i < n; i++) x[i] = Math.round(((random() - 0.5) * 0.02) / quantum) * quantum;
      for (let k = 0; k < 60; k++) {
        const at = Math.floor(random() * (n - 400));
        const length = 1 + Math.floor(random() * 300);
        x.fill(k % 3 === 0 ? 0 : k % 3 === 1 ? x[at] : -0, at, at + length);
      }
      for (let i = 500; i < 520; i += 2) x[i] = -0;
      x[9000] = x[9001] = NaN;
      return x;
    };
    const channels = [make(2 ** -7), make(2 ** -23), make(2 ** -15)];
    const runs = (kernels: "auto" | "js", blocks: number | number[]) => {
      const found: ValueRun[] = [];
      const t = createValueRunTracker(channels.length, 2, (r) => found.push({ ...r }), kernels);
      const sizes = typeof blocks === "number" ? [blocks] : blocks;
      for (let at = 0, b = 0; at < n; at += sizes[b++ % sizes.length]) {
        const block = sizes[b % sizes.length];
        t.push(channels.map((x) => x.subarray(at, Math.min(n, at + block))), Math.min(block, n - at));
      }
      t.finish();
      return found;
    };
    // Channels report in turn within each block, so the order depends on the block size: compare like with like.
    // The mixed sizes make the kernel's memory too small twice (each time a new instance, never a grown memory).
    for (const block of [65536, 16384, 999, 20000, [100, 30000, 7, 70000]]) {
      const js = runs("js", block);
      expect(js.length).toBeGreaterThan(500);
      expect(runs("auto", block)).toEqual(js);
    }
  });
});

describe("level-window sums kernel", () => {
  it("gives every window's sums, peaks and cross product bit for bit, mono to three channels, across block sizes", () => {
    const random = seededRandom(22);
    const n = 150000;
    const noise = (scale: number) => Float32Array.from({ length: n }, () => (random() - 0.5) * scale);
    const all = [noise(1.8), noise(0.01), noise(0.5)];
    // Peaks to find: equal maxima (the first counts), a negative one, NaN (never a peak) and a silent stretch.
    all[0][70000] = all[0][70010] = 0.99;
    all[1][5000] = -0.75;
    all[2][12345] = NaN;
    all[1].fill(0, 90000, 95000);
    for (const channels of [1, 2, 3]) {
      const inputs = all.slice(0, channels);
      const windows = (kernels: "auto" | "js", blocks: number[]) => {
        const seen: unknown[] = [];
        const acc = createLevelWindows(48000, channels, (w) => seen.push([w.index, w.startFrame, w.frames, [...w.sum], [...w.sumSquares], [...w.peakAbs], [...w.peakFrame], w.crossProduct]), kernels);
        for (let at = 0, b = 0; at < n; b++) {
          const size = Math.min(blocks[b % blocks.length], n - at);
          acc.push(inputs.map((x) => x.subarray(at, at + size)), size);
          at += size;
        }
        acc.finish();
        return seen;
      };
      // The mixed sizes outgrow the kernel's memory twice (a new instance each time).
      for (const blocks of [[65536], [4799], [100, 30000, 7, 70000]]) {
        const js = windows("js", blocks);
        expect(js.length).toBe(Math.ceil(n / 2400));
        // toEqual tells NaN from a number and -0 from 0 (Object.is), so this is bit for bit for the sums.
        expect(windows("auto", blocks)).toEqual(js);
      }
    }
  });
});
