/**
 * The overview strip's envelope (shared/src/spectral/waveformEnvelope.ts): per column the minimum and maximum
 * sample over all channels, checked against the definition (column c holds frames ⌈c·T/C⌉ … ⌈(c+1)·T/C⌉ − 1),
 * and the WebAssembly kernel (waveformKernels.wat) against the JavaScript loop value for value, signed zeros
 * and NaN included, for one to three channels, blocks of every size, fewer frames than columns and a stream
 * that runs past its declared length.
 */
import { describe, expect, it } from "vitest";
import { createWaveformAccumulator } from "../../shared/src/spectral/waveformEnvelope.ts";
import { WASM_MODULE_BYTES } from "../../shared/src/spectral/waveformKernels.generated.ts";
import { seededRandom } from "../fixtures/synth.ts";

function channelsOf(count: number, frames: number, seed: number): Float32Array[] {
  const random = seededRandom(seed);
  return Array.from({ length: count }, (_, c) => {
    const x = Float32Array.from({ length: frames }, () => (random() - 0.5) * (c + 1));
    // Ties between 0 and −0 (which one is kept depends on the order of the compares), and a NaN, never an extreme.
    for (let i = 0; i < frames; i += 97) x[i] = i % 2 === 0 ? 0 : -0;
    // A silent stretch whose zeros differ in sign by channel and frame: there the extremes are zeros.
    for (let i = 1000; i < Math.min(frames, 1300); i++) x[i] = (i + c) % 3 === 0 ? -0 : 0;
    if (frames > 50) x[50] = NaN;
    return x;
  });
}

function envelope(channels: Float32Array[], frames: number, totalFrames: number, columns: number, blocks: number[], kernels: "auto" | "js") {
  const acc = createWaveformAccumulator({ columns, totalFrames, sampleRateHz: 48000, kernels });
  for (let at = 0, b = 0; at < frames; b++) {
    const n = Math.min(blocks[b % blocks.length], frames - at);
    acc.push({ startFrame: at, frames: n, channels: channels.map((x) => x.subarray(at, at + n)) });
    at += n;
  }
  return acc.finish();
}

describe("waveform envelope", () => {
  it("has WebAssembly here, so the kernel is what is compared", () => {
    expect(WebAssembly.validate(WASM_MODULE_BYTES)).toBe(true);
  });

  for (const channelCount of [1, 2, 3]) {
    it(`${channelCount} channel(s): the kernel's columns are the JavaScript's, which are each column's own extremes`, () => {
      const frames = 48000;
      const columns = 1600;
      const channels = channelsOf(channelCount, frames, channelCount);
      for (const blocks of [[65536], [4800], [1000, 33333, 7]]) {
        const js = envelope(channels, frames, frames, columns, blocks, "js");
        const wasm = envelope(channels, frames, frames, columns, blocks, "auto");
        // toEqual tells 0 from −0 and NaN from numbers (Object.is).
        expect(Array.from(wasm.min)).toEqual(Array.from(js.min));
        expect(Array.from(wasm.max)).toEqual(Array.from(js.max));
      }
      const got = envelope(channels, frames, frames, columns, [4800], "auto");
      for (let c = 0; c < columns; c += 37) {
        let lo = Infinity;
        let hi = -Infinity;
        for (let f = Math.ceil((c * frames) / columns); f < Math.ceil(((c + 1) * frames) / columns); f++) {
          for (const x of channels) if (!Number.isNaN(x[f])) [lo, hi] = [Math.min(lo, x[f]), Math.max(hi, x[f])];
        }
        expect(got.min[c]).toBe(lo === 0 ? got.min[c] : lo);
        expect(got.max[c]).toBe(hi === 0 ? got.max[c] : hi);
      }
    });
  }

  it("fewer frames than columns, and a stream running past its declared length: as the JavaScript", () => {
    const channels = channelsOf(2, 3000, 9);
    for (const [frames, total] of [[700, 700], [3000, 2000]]) {
      for (const blocks of [[256], [3000]]) {
        const js = envelope(channels, frames, total, 1600, blocks, "js");
        const wasm = envelope(channels, frames, total, 1600, blocks, "auto");
        expect(Array.from(wasm.min)).toEqual(Array.from(js.min));
        expect(Array.from(wasm.max)).toEqual(Array.from(js.max));
      }
    }
  });
});
