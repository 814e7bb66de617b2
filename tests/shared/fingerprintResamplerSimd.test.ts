/**
 * The fingerprint resampler's WebAssembly SIMD loop (issue #22) must give bit for bit what its
 * JavaScript loop gives, or fingerprints stored before it would stop matching new scans. Compared
 * here on noise with planted NaN, infinities and out-of-range values, at the kernel rates the
 * fingerprinter uses, for one to three channels (pairs and an odd one), in blocks that make the
 * channel buffers grow and compact. (That the generated module is the .wat as it stands is checked with
 * the others in wasmKernels.test.ts.)
 */
import { describe, expect, it } from "vitest";
import { createMultiChannelResampler } from "../../shared/src/fingerprint/resampler.ts";
import { createSimdResampleStore } from "../../shared/src/fingerprint/resamplerSimd.ts";
import { createHalvingStage, type HalvingStage } from "../../shared/src/fingerprint/halvingStage.ts";
import { createSimdHalvingStage } from "../../shared/src/fingerprint/halvingSimd.ts";
import { seededRandom } from "../fixtures/synth.ts";

function resampleAll(inputs: Float32Array[], inputRateHz: number, simd: boolean, blocks: number[]): Float32Array[] {
  const r = createMultiChannelResampler({ inputRateHz, outputRateHz: 11025, passbandHz: 4000, stopbandHz: 7025, simd }, inputs.length);
  const length = inputs[0].length;
  const outs = inputs.map(() => new Float32Array(Math.ceil((length * 11025) / inputRateHz) + 8));
  let n = 0;
  let b = 0;
  for (let s = 0; s < length; ) {
    const count = Math.min(blocks[b++ % blocks.length], length - s);
    r.write(inputs.map((x) => x.subarray(s, s + count)), count);
    // Sometimes read into a short window, so a read stops before the ready outputs run out.
    n += r.read(outs.map((o) => o.subarray(n, b % 3 === 0 ? n + 1000 : o.length)));
    s += count;
  }
  r.end();
  for (let got = -1; got !== 0; ) {
    got = r.read(outs.map((o) => o.subarray(n)));
    n += got;
  }
  return outs.map((o) => o.subarray(0, n));
}

function noise(seed: number, length: number, planted: boolean): Float32Array {
  const rnd = seededRandom(seed);
  const x = Float32Array.from({ length }, () => 2 * rnd() - 1);
  if (planted) {
    x[length >> 2] = Number.NaN;
    x[length >> 1] = Number.POSITIVE_INFINITY;
    x.fill(3.4e38, (3 * length) >> 2, ((3 * length) >> 2) + 40);
  }
  return x;
}

/** Bit patterns, so NaN compares with NaN and −0 differs from +0. */
const bits = (x: Float32Array): Uint32Array => new Uint32Array(x.buffer, x.byteOffset, x.length);

describe("fingerprint: SIMD resampler", () => {
  it("runs here (else the comparisons below would compare the JavaScript loop with itself)", () => {
    expect(createSimdResampleStore(new Float32Array(8), 4, 2, 16)).not.toBeNull();
  });

  it.each([
    [24000, 2, false],
    [22050, 1, true],
    [24000, 3, true],
    [32000, 2, true],
    [8000, 1, false],
    [48000, 4, false],
    // A step of exactly 1025/1024 input samples: every other output's phase is an exact tie (x.5 of
    // 512), where Math.round goes up and a round-half-even would not.
    [(11025 * 1025) / 1024, 1, false],
    [(11025 * 1025) / 1024, 2, false],
  ])("%i Hz, %i channel(s), planted non-finite %s: bit-identical to the JavaScript loop", (rate, channels, planted) => {
    const inputs = Array.from({ length: channels }, (_, c) => noise(100 * rate + c, Math.round(1.5 * rate), planted as boolean));
    // 40 000 frames outgrow the 4096-sample start; the odd sizes split kernel spans anywhere.
    const blocks = [40000, 777, 1, 4096, 12345];
    const js = resampleAll(inputs, rate, false, blocks);
    const simd = resampleAll(inputs, rate, true, blocks);
    expect(js[0].length).toBe(Math.ceil((inputs[0].length * 11025) / rate));
    for (let c = 0; c < channels; c++) expect(bits(simd[c]), `channel ${c}`).toEqual(bits(js[c]));
  });

  it("grows into a new memory instead of growing one (which would detach its buffer and slow every typed array)", () => {
    const store = createSimdResampleStore(new Float32Array(8), 4, 2, 16)!;
    const before = store.buffers.slice();
    before[0].set([1, 2, 3]);
    before[1].set([4, 5]);
    store.grow(100000, 3);
    expect(store.capacity).toBeGreaterThanOrEqual(100000);
    // A detached buffer's views read as empty.
    expect(before[0].length).toBe(16);
    expect(Array.from(store.buffers[0].subarray(0, 3))).toEqual([1, 2, 3]);
    expect(Array.from(store.buffers[1].subarray(0, 3))).toEqual([4, 5, 0]);
  });
});

/** Runs `inputs` through a stage in the given block sizes (cycled), then end(); all outputs concatenated. */
function halveAll(stage: HalvingStage, inputs: Float32Array[], blocks: number[]): Float32Array[] {
  const length = inputs[0].length;
  const outs = inputs.map(() => new Float32Array(Math.floor(length / 2) + 2));
  let n = 0;
  let b = 0;
  for (let s = 0; s < length; ) {
    const count = Math.min(blocks[b++ % blocks.length], length - s);
    n += stage.push(inputs.map((x) => x.subarray(s, s + count)), count, outs.map((o) => o.subarray(n)));
    s += count;
  }
  n += stage.end(outs.map((o) => o.subarray(n)));
  return outs.map((o) => o.subarray(0, n));
}

describe("fingerprint: SIMD halving stage", () => {
  it.each([
    [1, [65536, 3, 1, 0, 20000]],
    [2, [65536, 7, 1, 2, 40001]],
    [2, [1, 1, 1, 5]],
    [3, [9999, 16384, 16385, 2]],
    [4, [33333, 4]],
  ])("%i channel(s), blocks %j: bit-identical to the JavaScript stage", (channels, blocks) => {
    const inputs = Array.from({ length: channels }, (_, c) => noise(7 + c, 100001, c === 0));
    const simd = createSimdHalvingStage(channels);
    expect(simd, "WebAssembly SIMD missing: the comparison would be vacuous").not.toBeNull();
    const want = halveAll(createHalvingStage(channels), inputs, blocks);
    const got = halveAll(simd!, inputs, blocks);
    expect(want[0].length).toBe(50001);
    for (let c = 0; c < channels; c++) expect(bits(got[c]), `channel ${c}`).toEqual(bits(want[c]));
  });
});

