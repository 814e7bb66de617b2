import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { amplitudeToDb } from "../../shared/src/analysis/decibels.ts";
import { createTruePeakMeter, designInterpolationFilter, truePeakOversampling, type TruePeakResult } from "../../shared/src/analysis/truePeak.ts";
import { ffmpegAvailable, ffmpegEbur128 } from "../helpers/ffmpeg.ts";
import { pinkNoise, seededRandom, sine, speechLike, whiteNoise } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";

function measure(channels: Float32Array[], sampleRateHz: number, blockFrames = 65536): TruePeakResult {
  const meter = createTruePeakMeter(sampleRateHz, channels.length);
  for (let at = 0; at < channels[0].length; at += blockFrames) {
    const n = Math.min(blockFrames, channels[0].length - at);
    meter.push(channels.map((x) => x.subarray(at, at + n)), n);
  }
  return meter.finish();
}

/** The same filter run on every output with no skipping: the reference for the skip bounds' exactness. */
function bruteForcePeak(x: Float32Array, factor: number): number {
  const f = designInterpolationFilter(factor);
  const padded = new Float32Array(x.length + 2 * f.tapsPerPhase);
  padded.set(x, f.tapsPerPhase);
  let best = 0;
  for (let i = 0; i < x.length; i++) best = Math.max(best, Math.abs(x[i]));
  for (let n = f.tapsPerPhase - 1; n < padded.length; n++) {
    for (const p of f.phases) {
      let y = 0;
      for (let j = 0; j < p.length; j++) y += p[j] * padded[n - j];
      best = Math.max(best, Math.abs(y));
    }
  }
  return best;
}

/**
 * Raised-cosine fade in and out: a signal that starts on a non-zero sample is a step, and any band-limited
 * reconstruction rings on a step. The test signals here are about steady tones, so their edges are smoothed.
 */
function faded(x: Float32Array, rampFrames: number): Float32Array {
  const out = x.slice();
  for (let i = 0; i < rampFrames; i++) {
    const g = 0.5 - 0.5 * Math.cos((Math.PI * i) / rampFrames);
    out[i] *= g;
    out[x.length - 1 - i] *= g;
  }
  return out;
}

/** EBU Tech 3341 (2016), 2.9: true-peak readings must be within +0.2/−0.4 dB. */
const expectTruePeakWithin = (measuredDb: number, expectedDb: number) => {
  expect(measuredDb - expectedDb).toBeLessThanOrEqual(0.2);
  expect(measuredDb - expectedDb).toBeGreaterThanOrEqual(-0.4);
};

describe("true peak (ITU-R BS.1770-4, Annex 2)", () => {
  it.each([48000, 44100])("a sine at fs/4 with 45° phase: sample peak 3.01 dB under the true peak (%i Hz)", (rateHz) => {
    // Samples of sin(π/2·n + π/4) are ±√½ of the amplitude: −3.01 dB (definition); the true peak is the amplitude.
    const x = faded(sine({ frequencyHz: rateHz / 4, sampleRateHz: rateHz, seconds: 1, peakDbfs: -6, phaseRadians: Math.PI / 4 }), 960);
    let samplePeak = 0;
    for (const v of x) samplePeak = Math.max(samplePeak, Math.abs(v));
    expect(amplitudeToDb(samplePeak)).toBeCloseTo(-6 - 3.0103, 3);
    const tp = amplitudeToDb(measure([x], rateHz).peakAmplitude[0]);
    expectTruePeakWithin(tp, -6);
  });

  it.each([
    { divisor: 4, phaseDeg: 45 },
    { divisor: 6, phaseDeg: 60 },
    { divisor: 8, phaseDeg: 67.5 },
  ])("sines at fs/$divisor with $phaseDeg° phase read their amplitude (EBU Tech 3341 true-peak signals, from memory)", ({ divisor, phaseDeg }) => {
    const x = faded(sine({ frequencyHz: 48000 / divisor, sampleRateHz: 48000, seconds: 0.5, peakDbfs: 0, phaseRadians: (phaseDeg * Math.PI) / 180 }), 960);
    expectTruePeakWithin(amplitudeToDb(measure([x, x], 48000).peakAmplitude[1]), 0);
  });

  it("sums of random sines: the continuous peak, found analytically on a 256× grid, within +0.2/−0.4 dB", () => {
    const rnd = seededRandom(77);
    const rate = 48000;
    for (let trial = 0; trial < 6; trial++) {
      const parts = Array.from({ length: 3 }, () => ({ f: 200 + rnd() * 0.8 * 21600, a: 0.2 + 0.3 * rnd(), phi: 2 * Math.PI * rnd() }));
      const n = 4800;
      const ramp = 480;
      // A raised-cosine envelope over the first and last 10 ms keeps the signal free of steps (see faded()).
      const envelope = (t: number) => {
        const k = Math.min(t * rate, n - 1 - t * rate);
        return k >= ramp ? 1 : k <= 0 ? 0 : 0.5 - 0.5 * Math.cos((Math.PI * k) / ramp);
      };
      const value = (t: number) => envelope(t) * parts.reduce((s, p) => s + p.a * Math.sin(2 * Math.PI * p.f * t + p.phi), 0);
      const x = new Float32Array(n);
      for (let i = 0; i < n; i++) x[i] = value(i / rate);
      let continuous = 0;
      for (let i = 0; i < n * 256; i++) continuous = Math.max(continuous, Math.abs(value(i / (rate * 256))));
      expectTruePeakWithin(amplitudeToDb(measure([x], rate).peakAmplitude[0]), amplitudeToDb(continuous));
    }
  });

  it("skipping windows by the ‖h‖₁ and Cauchy–Schwarz bounds gives exactly the full computation's peak", () => {
    const signals = [
      whiteNoise({ sampleRateHz: 48000, seconds: 2, rmsDbfs: -12, seed: 8 }),
      pinkNoise({ sampleRateHz: 48000, seconds: 2, rmsDbfs: -15, seed: 9 }),
      speechLike({ sampleRateHz: 48000, seconds: 2, rmsDbfs: -20, seed: 10 }),
      sine({ frequencyHz: 11025, sampleRateHz: 48000, seconds: 0.5, phaseRadians: 0.3 }),
    ];
    for (const x of signals) expect(measure([x], 48000).peakAmplitude[0]).toBeCloseTo(bruteForcePeak(x, 4), 12);
  });

  it("never reads below the sample peak (phase 0 is the identity)", () => {
    const filter = designInterpolationFilter(4);
    const x = whiteNoise({ sampleRateHz: 44100, seconds: 1, rmsDbfs: -6, seed: 12 });
    let samplePeak = 0;
    for (const v of x) samplePeak = Math.max(samplePeak, Math.abs(v));
    expect(measure([x], 44100).peakAmplitude[0]).toBeGreaterThanOrEqual(samplePeak);
    for (const p of filter.phases) expect(p.reduce((s, v) => s + v, 0)).toBeCloseTo(1, 12);
    expect(filter.phases.length).toBe(3);
    expect(filter.tapsPerPhase * filter.factor).toBe(48);
  });

  it("locates the peak in time", () => {
    const x = new Float32Array(48000);
    x[30000] = 0.5;
    x[30001] = 0.5;
    const result = measure([x], 48000);
    // Two equal samples: the interpolated peak lies between them.
    expect(result.peakFrame[0]).toBeGreaterThan(30000);
    expect(result.peakFrame[0]).toBeLessThan(30001);
    expect(result.peakAmplitude[0]).toBeGreaterThan(0.5);
  });

  it("oversamples 4× below 96 kHz, 2× to 192 kHz, not at all above (BS.1770-4, Annex 2)", () => {
    expect([44100, 48000, 88200, 96000, 176400, 192000, 384000].map(truePeakOversampling)).toEqual([4, 4, 4, 2, 2, 1, 1]);
    const x = whiteNoise({ sampleRateHz: 192000, seconds: 0.1, rmsDbfs: -10 });
    let samplePeak = 0;
    for (const v of x) samplePeak = Math.max(samplePeak, Math.abs(v));
    expect(measure([x], 192000).peakAmplitude[0]).toBeCloseTo(samplePeak, 12);
  });

  it("blocks of 1, 997 and 65536 frames give the same peak", () => {
    const x = speechLike({ sampleRateHz: 48000, seconds: 3, rmsDbfs: -18, seed: 3 });
    const ref = measure([x], 48000, 65536);
    for (const blockFrames of [1, 997]) {
      const r = measure([x], 48000, blockFrames);
      expect(r.peakAmplitude[0]).toBeCloseTo(ref.peakAmplitude[0], 12);
      expect(r.peakFrame[0]).toBeCloseTo(ref.peakFrame[0], 6);
    }
  });

  it("rejects a filter it cannot build, saying why", () => {
    expect(() => designInterpolationFilter(4, 7)).toThrow(/even integer ≥ 2, got 7/);
    expect(() => designInterpolationFilter(0)).toThrow(/positive integer, got 0/);
  });
});

describe.runIf(ffmpegAvailable)("true peak against Debian's ffmpeg ebur128 (independent meter)", () => {
  let dir: string;
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), "tidemark-tp-"));
  });
  afterAll(async () => {
    await rm(dir, { recursive: true, force: true });
  });

  it.each([
    { name: "speech-like", make: () => speechLike({ sampleRateHz: 48000, seconds: 10, rmsDbfs: -16, seed: 31 }) },
    // Pink, not white: uniform white noise is full-band up to Nyquist, where every interpolator reads differently
    // (measured: 4×12 taps −4.85, 16×64 taps −3.82 dBTP on the same noise); pink noise agrees within 0.1 dB across filters.
    { name: "pink noise", make: () => pinkNoise({ sampleRateHz: 48000, seconds: 10, rmsDbfs: -14, seed: 32 }) },
  ])("$name: within 0.2 dB", async ({ name, make }) => {
    const x = make();
    const path = join(dir, `${name}.wav`);
    await writeFile(path, encodeWav([x, x], { sampleRateHz: 48000, bitDepth: 24 }));
    const theirs = await ffmpegEbur128(path);
    const ours = amplitudeToDb(measure([x, x], 48000).peakAmplitude[0]);
    // ffmpeg prints one decimal; 0.2 dB also covers the two interpolators' different designs.
    expect(Math.abs(ours - theirs.truePeakDbtp)).toBeLessThanOrEqual(0.2);
  });
});
