/**
 * The loudness curve (issue #16): bucketing by maximum, point spacing, and maxima equal to the meter's
 * own max momentary / short-term loudness (the meter is checked against EBU Tech 3341 in loudness.test.ts).
 */
import { describe, expect, it } from "vitest";
import { createLevelWindows } from "../../shared/src/analysis/levelWindows.ts";
import { createLoudnessMeter } from "../../shared/src/analysis/loudness.ts";
import { createLoudnessCurveAccumulator, curveStepSeconds, MAX_CURVE_POINTS, reduceByMax } from "../../shared/src/closeups/loudnessCurve.ts";
import { sineSteps } from "../fixtures/synth.ts";

describe("curve reduction", () => {
  it("keeps each bucket's maximum, ignoring gaps", () => {
    const got = reduceByMax(Float64Array.from([1, 5, 2, NaN, NaN, NaN, -3, -1]), 3);
    expect(Array.from(got)).toEqual([5, NaN, -1]);
    expect(() => reduceByMax(new Float64Array(3), 0)).toThrow(/positive integer, got 0/);
  });

  it("spaces points 0.1 s apart, wider only when a file would pass 20 000 points", () => {
    expect(curveStepSeconds(180)).toBe(0.1);
    expect(curveStepSeconds(2000)).toBe(0.1); // exactly 20 000 points
    expect(curveStepSeconds(2000.05)).toBe(0.2);
    expect(curveStepSeconds(3 * 3600)).toBeCloseTo(0.6, 9); // 18 000 points
    for (const seconds of [1, 599.9, 7200, 3 * 3600 + 1]) expect(Math.ceil(seconds / curveStepSeconds(seconds))).toBeLessThanOrEqual(MAX_CURVE_POINTS);
  });
});

describe("createLoudnessCurveAccumulator", () => {
  function run(seconds: number, steps: [number, number][], maxPoints?: number) {
    const rate = 48000;
    const x = sineSteps({ frequencyHz: 1000, sampleRateHz: rate, steps });
    const curve = createLoudnessCurveAccumulator({ sampleRateHz: rate, channels: 1, totalFrames: x.length }, maxPoints);
    const meter = createLoudnessMeter(rate, 1, undefined, curve.onHop);
    // The sample-peak envelope is fed from the level analyser's 50 ms windows, as in fileAnalysis.ts.
    const windows = createLevelWindows(rate, 1, (w) => curve.peak(0, w.peakAbs[0], w.peakFrame[0]));
    for (let at = 0; at < x.length; at += 4096) {
      const block = x.subarray(at, Math.min(x.length, at + 4096));
      meter.push([block], block.length);
      windows.push([block], block.length);
    }
    windows.finish();
    return { result: meter.finish(), curve: curve.finish(), seconds };
  }
  const max = (xs: (number | null)[]) => Math.max(...xs.filter((v): v is number => v !== null));

  it("has ≥ 10 points a second and maxima equal to the meter's, to 0.01 LU", () => {
    // 1 kHz sine: 10 s at −30 dBFS, 2 s at −10, 10 s at −30 (peak levels).
    const { result, curve } = run(22, [[-30, 10], [-10, 2], [-30, 10]]);
    expect(curve.momentaryLufs).toHaveLength(220);
    expect(curve.shortTermLufs).toHaveLength(220);
    expect(Math.abs(max(curve.momentaryLufs) - result.maxMomentaryLufs)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(max(curve.shortTermLufs) - result.maxShortTermLufs)).toBeLessThanOrEqual(0.01);
    // Momentary needs 0.4 s of audio, short-term 3 s: the points before have no value.
    expect(curve.momentaryLufs[2]).toBeNull();
    expect(curve.momentaryLufs[3]).not.toBeNull();
    expect(curve.shortTermLufs[28]).toBeNull();
    expect(curve.shortTermLufs[29]).not.toBeNull();
    // The loud part is where the curve is loud: a −10 dBFS-peak sine reads ≈ −13 LUFS, −30 ≈ −33 (BS.1770-4: a 1 kHz sine at −3.01 dBFS RMS … reads −3.01 LUFS).
    expect(curve.momentaryLufs[115]).toBeCloseTo(-13.0, 0);
    expect(curve.momentaryLufs[50]).toBeCloseTo(-33.0, 0);
    // Sample peak per bucket: −10 dBFS in the loud part.
    expect(curve.samplePeakDbfs[0][115]).toBeCloseTo(-10, 1);
  });

  it("keeps the maxima through a coarser bucketing (forced to ≤ 50 points)", () => {
    const { result, curve } = run(22, [[-30, 10], [-10, 2], [-30, 10]], 50);
    expect(curve.stepSeconds).toBeCloseTo(0.5, 9);
    expect(curve.momentaryLufs.length).toBeLessThanOrEqual(50);
    expect(Math.abs(max(curve.momentaryLufs) - result.maxMomentaryLufs)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(max(curve.shortTermLufs) - result.maxShortTermLufs)).toBeLessThanOrEqual(0.01);
  });
});
