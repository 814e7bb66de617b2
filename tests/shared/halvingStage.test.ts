import { describe, expect, it } from "vitest";
import { createFingerprinter } from "../../shared/src/fingerprint/fingerprinter.ts";
import { createHalvingStage } from "../../shared/src/fingerprint/halvingStage.ts";
import { rmsDbfs, sine, whiteNoise } from "../fixtures/synth.ts";

/** Runs `x` through a fresh stage in blocks of the given sizes (cycled), then end(). */
function halve(x: Float32Array, blockSizes: number[]): Float32Array {
  const stage = createHalvingStage(1);
  const out = new Float32Array(Math.floor(x.length / 2) + 2);
  const scratch = [new Float32Array(Math.max(...blockSizes) + 2)];
  let n = 0;
  let at = 0;
  for (let b = 0; at < x.length; b++) {
    const size = Math.min(blockSizes[b % blockSizes.length], x.length - at);
    const made = stage.push([x.subarray(at, at + size)], size, scratch);
    out.set(scratch[0].subarray(0, made), n);
    n += made;
    at += size;
  }
  n += stage.end([out.subarray(n)]);
  return out.subarray(0, n);
}

/** The definition, y[j] = (x[2j−2] + 3x[2j−1] + 3x[2j] + x[2j+1]) / 8 with x = 0 outside the clip. */
function halveByDefinition(x: Float32Array): Float64Array {
  const at = (i: number): number => (i >= 0 && i < x.length ? x[i] : 0);
  const y = new Float64Array(Math.ceil(x.length / 2));
  for (let j = 0; j < y.length; j++) y[j] = (at(2 * j - 2) + 3 * at(2 * j - 1) + 3 * at(2 * j) + at(2 * j + 1)) / 8;
  return y;
}

describe("fingerprint: halving stage", () => {
  const x = whiteNoise({ sampleRateHz: 48000, seconds: 0.05, rmsDbfs: -12, seed: 7 }).subarray(0, 2401);

  it("computes the cubed two-point average of its definition, whatever the block sizes (odd ones too)", () => {
    const expected = halveByDefinition(x);
    for (const sizes of [[2401], [1], [2], [3, 5, 8], [1000, 1, 1, 7]]) {
      const y = halve(x, sizes);
      expect(y.length).toBe(expected.length);
      let worst = 0;
      for (let j = 0; j < y.length; j++) worst = Math.max(worst, Math.abs(y[j] - expected[j]));
      expect(worst).toBeLessThan(1e-6); // Float32 output of a Float64 sum
    }
  });

  it.each([
    [1000, 48000],
    [4000, 48000],
    [4000, 44100],
    [20000, 48000],
  ])("gives a %i Hz tone at %i Hz the gain cos³(πf/rate) of its taps' transform", (frequencyHz, rate) => {
    // (1 + z⁻¹)³ / 8 on the unit circle has magnitude cos³(πf/rate): derived from the taps.
    const tone = sine({ frequencyHz, sampleRateHz: rate, seconds: 0.2, peakDbfs: -6 });
    const y = halve(tone, [4096]);
    const measured = rmsDbfs(y.subarray(100, y.length - 100)) - rmsDbfs(tone);
    const expected = 20 * Math.log10(Math.cos((Math.PI * frequencyHz) / rate) ** 3);
    expect(Math.abs(measured - expected)).toBeLessThan(0.05);
  });

  it("refuses a push after end() and outputs too short for the block", () => {
    const stage = createHalvingStage(2);
    expect(() => stage.push([x, x], 100, [new Float32Array(10), new Float32Array(10)])).toThrow(/needs 50/);
    stage.end([new Float32Array(1), new Float32Array(1)]);
    expect(() => stage.push([x, x], 2, [new Float32Array(2), new Float32Array(2)])).toThrow(/after end/);
  });
});

describe("fingerprint: whole front end at 48 kHz", () => {
  it("keeps a 21 kHz tone, which the halving would fold onto 3 kHz, out of the fingerprint", () => {
    // After halving to 24 kHz a 21 kHz tone sits at 3 kHz: cos³(π·21/48) ≈ −47 dB keeps it below the floor
    // a −6 dBFS in-band tone would be picked above; a peak-free fingerprint shows nothing got through.
    const rate = 48000;
    const tone = sine({ frequencyHz: 21000, sampleRateHz: rate, seconds: 3, peakDbfs: -60 });
    const fp = createFingerprinter({ sampleRateHz: rate, channels: 1, bitDepth: 24, encoding: "pcm", totalFrames: tone.length });
    fp.push({ startFrame: 0, frames: tone.length, channels: [tone] });
    expect(fp.finish().hashes.length).toBe(0);
    // Control: the same level in band does make peaks, so the empty result above means something.
    const inBand = sine({ frequencyHz: 3000, sampleRateHz: rate, seconds: 3, peakDbfs: -60 });
    const steady = createFingerprinter({ sampleRateHz: rate, channels: 1, bitDepth: 24, encoding: "pcm", totalFrames: inBand.length });
    steady.push({ startFrame: 0, frames: inBand.length, channels: [inBand] });
    expect(steady.finish().hashes.length).toBeGreaterThan(0);
  });
});
