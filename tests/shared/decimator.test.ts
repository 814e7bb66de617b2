import { describe, expect, it } from "vitest";
import { createDecimator } from "../../shared/src/spectral/decimator.ts";
import type { AudioBlock } from "../../shared/src/types/analysis.ts";
import { blocksOf } from "../fixtures/spectralSignals.ts";
import { seededRandom, sine } from "../fixtures/synth.ts";

/** Runs the decimator over x in blocks, computing every output; returns them in order. */
function decimateAll(x: Float32Array, factor: number, blockFrames: number, useWasm = true): Float32Array {
  const d = createDecimator({ channels: 1, factor, useWasm });
  const out = new Float32Array(Math.ceil(x.length / factor));
  for (const block of blocksOf([x], blockFrames)) {
    const { firstOutput, endOutput } = d.stage(block);
    d.compute(firstOutput, endOutput, (o: AudioBlock) => out.set(o.channels[0].subarray(0, o.frames), o.startFrame));
  }
  return out;
}

describe("cubed-boxcar decimator", () => {
  it("equals three moving sums of length D applied one after another, then every D-th sample", () => {
    const factor = 8;
    const rnd = seededRandom(17);
    const x = new Float32Array(5000);
    for (let i = 0; i < x.length; i++) x[i] = 2 * rnd() - 1;
    // Reference from the definition: y = (box ∗ box ∗ box ∗ x)[mD] / D³, zero before the start.
    let stage = Float64Array.from(x);
    for (let pass = 0; pass < 3; pass++) {
      const next = new Float64Array(stage.length);
      for (let n = 0; n < stage.length; n++) {
        let sum = 0;
        for (let j = 0; j < factor; j++) if (n - j >= 0) sum += stage[n - j];
        next[n] = sum / factor;
      }
      stage = next;
    }
    for (const blockFrames of [4096, 333, 7]) {
      const y = decimateAll(x, factor, blockFrames);
      for (let m = 0; m < y.length; m++) expect(y[m]).toBeCloseTo(stage[m * factor], 5);
    }
  });

  it.each([100, 500, 2000, 5500])("passes a %i Hz sine with the third-order CIC gain |sin(πfD/fs) / (D·sin(πf/fs))|³", (hz) => {
    const rate = 48000;
    const factor = 8;
    const y = decimateAll(sine({ frequencyHz: hz, sampleRateHz: rate, seconds: 1 }), factor, 4096);
    let sum = 0;
    const from = 100;
    for (let m = from; m < y.length; m++) sum += y[m] * y[m];
    const amplitude = Math.sqrt((2 * sum) / (y.length - from));
    // Hogenauer 1981, "An economical class of digital filters for decimation and interpolation", eq. for |H(f)|.
    const expected = Math.abs(Math.sin((Math.PI * hz * factor) / rate) / (factor * Math.sin((Math.PI * hz) / rate))) ** 3;
    expect(20 * Math.log10(amplitude)).toBeCloseTo(20 * Math.log10(expected), 1);
  });

  it("computes only the outputs asked for, reading each block in place", () => {
    const x = new Float32Array(64).fill(1);
    const d = createDecimator({ channels: 1, factor: 4 });
    const range = d.stage({ channels: [x], frames: 64, startFrame: 0 });
    expect(range).toEqual({ firstOutput: 0, endOutput: 16 });
    const got: number[] = [];
    d.compute(10, 12, (o) => got.push(o.startFrame, o.frames, o.channels[0][0]));
    // A constant passes at unity gain once the 10-tap window is full (taps sum to 1).
    expect(got[0]).toBe(10);
    expect(got[1]).toBe(2);
    expect(got[2]).toBeCloseTo(1, 6);
    expect(() => d.stage({ channels: [x], frames: 64, startFrame: 100 })).toThrow(/contiguous blocks: expected startFrame 64, got 100/);
  });

  // decimatorKernels.wat against the JavaScript loops (decimate22 for factor 8, the general loop otherwise).
  describe("WebAssembly FIR", () => {
    /**
     * Every output of a stereo stream in blocks of the given lengths, computed in stretches of `stretch`
     * outputs (as lowRateStream asks for them), the blocks handed over in arrays longer than their frames
     * (as the reader reuses its arrays).
     */
    function decimateStereo(x: Float32Array[], factor: number, blockLengths: number[], stretch: number, useWasm: boolean) {
      const d = createDecimator({ channels: 2, factor, useWasm });
      const out = x.map((ch) => new Float32Array(Math.ceil(ch.length / factor)));
      let start = 0;
      for (let b = 0; start < x[0].length; b++) {
        const frames = Math.min(blockLengths[b % blockLengths.length], x[0].length - start);
        const channels = x.map((ch) => {
          const padded = new Float32Array(frames + 5).fill(Number.NaN);
          padded.set(ch.subarray(start, start + frames));
          return padded;
        });
        const { firstOutput, endOutput } = d.stage({ channels, frames, startFrame: start });
        for (let from = firstOutput; from < endOutput; from += stretch) {
          d.compute(from, Math.min(endOutput, from + stretch), (o: AudioBlock) => {
            for (let c = 0; c < 2; c++) out[c].set(o.channels[c].subarray(0, o.frames), o.startFrame);
          });
        }
        start += frames;
      }
      return { out, engine: d.engine };
    }

    it.each([
      [8, [4096], 7],
      [8, [65536], 1000],
      // A block longer than the kernel's memory was made for: a new instance then.
      [8, [1000, 100_000, 333], 50],
      [4, [777, 64], 3],
      [16, [4096, 5], 100],
      [1, [300], 20],
    ])("gives the JavaScript's outputs bit for bit (factor %i, blocks %j, stretches of %i)", (factor, blocks, stretch) => {
      const rnd = seededRandom(factor * 31 + blocks.length);
      const x = [new Float32Array(150_000), new Float32Array(150_000)];
      for (const ch of x) for (let i = 0; i < ch.length; i++) ch[i] = (2 * rnd() - 1) * (i % 5000 < 10 ? 1e-30 : 1);
      const wasm = decimateStereo(x, factor, blocks, stretch, true);
      const js = decimateStereo(x, factor, blocks, stretch, false);
      expect(wasm.engine).toBe("wasm");
      expect(js.engine).toBe("js");
      for (let c = 0; c < 2; c++) {
        expect(new Uint32Array(wasm.out[c].buffer)).toEqual(new Uint32Array(js.out[c].buffer));
      }
      // Not all zeros (a kernel writing nothing would agree with nothing).
      expect(wasm.out[0].some((v) => Math.abs(v) > 0.01)).toBe(true);
    });
  });
});
