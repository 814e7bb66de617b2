import { describe, expect, it } from "vitest";
import { judgeBandwidth, medianSmooth } from "../../shared/src/spectral/bandwidth.ts";
import { createSpectralAnalyser } from "../../shared/src/spectral/spectralAnalyser.ts";
import type { SpectralAnalysisResult } from "../../shared/src/types/analysis.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../../shared/src/types/settings.ts";
import { blocksOf, resampleWithSox, streamFormat, windowedSincLowpass } from "../fixtures/spectralSignals.ts";
import { mix, pinkNoise, seededRandom, sine, whiteNoise } from "../fixtures/synth.ts";
import { recordAccuracy } from "../helpers/accuracyLog.ts";
import { ffmpegEncoders, lossyRoundTrip, soxAvailable } from "../helpers/externalAudio.ts";

function analyse(channels: Float32Array[], sampleRateHz: number): SpectralAnalysisResult {
  const a = createSpectralAnalyser(streamFormat(channels, sampleRateHz), DEFAULT_ANALYSIS_SETTINGS);
  for (const b of blocksOf(channels)) a.push(b);
  return a.finish();
}

const codes = (r: SpectralAnalysisResult): string[] => r.findings.map((f) => f.code);

describe("bandwidth and lossy-origin findings", () => {
  const rate = 48000;
  const noise = whiteNoise({ sampleRateHz: rate, seconds: 4, rmsDbfs: -20, seed: 5 });

  it("measures white noise low-passed at 16 kHz as 16 kHz ± 5 % and flags it band-limited", () => {
    // Filter built in the test from its definition (Blackman-windowed sinc, fixtures/spectralSignals.ts).
    const r = analyse([windowedSincLowpass(noise, rate, 16000)], rate);
    // Issue #4: 16 kHz ± 5 %; lossy encoders low-pass at 15–20 kHz (common practice).
    expect(r.metrics.bandwidthHz).toBeGreaterThan(16000 * 0.95);
    expect(r.metrics.bandwidthHz).toBeLessThan(16000 * 1.05);
    expect(codes(r)).toEqual(["band-limited"]);
    const finding = r.findings[0];
    expect(finding).toMatchObject({ severity: "warn", channel: null, startSeconds: null, endSeconds: null });
    expect(finding.message).toMatch(/16(\.\d+)? kHz/);
    expect(finding.message).toMatch(/24 kHz Nyquist/);
  });

  it("also finds the shelf under a sloping (pink) spectrum, low-passed at 15 kHz", () => {
    const pink = pinkNoise({ sampleRateHz: rate, seconds: 4, rmsDbfs: -20, seed: 9 });
    const r = analyse([windowedSincLowpass(pink, rate, 15000)], rate);
    expect(Math.abs((r.metrics.bandwidthHz ?? 0) / 15000 - 1)).toBeLessThan(0.05);
    expect(codes(r)).toEqual(["band-limited"]);
  });

  it("leaves the same noise unfiltered alone: bandwidth reaches Nyquist, no finding", () => {
    const r = analyse([noise], rate);
    expect(r.metrics.bandwidthHz).toBe(24000);
    expect(codes(r)).toEqual([]);
  });

  it("does not take a pure tone's skirt for a shelf", () => {
    const r = analyse([sine({ frequencyHz: 1000, sampleRateHz: rate, seconds: 3, peakDbfs: -3 })], rate);
    expect(codes(r)).toEqual([]);
  });

  it("flags 44.1 kHz material resampled to 96 kHz by sox as upsampled from 44.1 kHz", () => {
    const source = whiteNoise({ sampleRateHz: 44100, seconds: 3, rmsDbfs: -20, seed: 21 });
    // sox (Debian's /usr/bin/sox, an independent resampler) does the upsampling.
    const upsampled = resampleWithSox(source, 44100, 96000);
    expect(upsampled.length).toBeGreaterThan(96000 * 2.9);
    const r = analyse([upsampled], 96000);
    expect(codes(r)).toEqual(["upsampled"]);
    expect(r.findings[0].message).toMatch(/from 44\.1 kHz to 96 kHz/);
    // The old Nyquist is 22.05 kHz; a resampler's edge sits just below it.
    expect(r.metrics.bandwidthHz).toBeGreaterThan(22050 * 0.88);
    expect(r.metrics.bandwidthHz).toBeLessThan(22050 * 1.01);
  });

  it("names 48 kHz when 48 kHz material was resampled to 192 kHz", () => {
    const source = whiteNoise({ sampleRateHz: 48000, seconds: 2, rmsDbfs: -20, seed: 22 });
    const r = analyse([resampleWithSox(source, 48000, 192000)], 192000);
    expect(codes(r)).toEqual(["upsampled"]);
    expect(r.findings[0].message).toMatch(/from 48 kHz to 192 kHz/);
  });

  it("reports a shelf on one channel only for that channel", () => {
    const left = whiteNoise({ sampleRateHz: rate, seconds: 3, rmsDbfs: -20, seed: 31 });
    const right = windowedSincLowpass(whiteNoise({ sampleRateHz: rate, seconds: 3, rmsDbfs: -20, seed: 32 }), rate, 12000);
    const r = analyse([left, right], rate);
    expect(r.findings.map((f) => [f.code, f.channel])).toEqual([["band-limited", 1]]);
  });

  it("gives null bandwidth for silence and keeps quiet", () => {
    const r = analyse([new Float32Array(rate), new Float32Array(rate)], rate);
    expect(r.metrics.bandwidthHz).toBeNull();
    expect(codes(r)).toEqual([]);
  });

  it("holds hum plus broadband noise to Nyquist (hum is not a shelf)", () => {
    const r = analyse([mix(noise, sine({ frequencyHz: 50, sampleRateHz: rate, seconds: 4, peakDbfs: -10 }))], rate);
    expect(r.metrics.bandwidthHz).toBe(24000);
  });
});

describe("upsampled or lossy: test material made with Debian's sox and ffmpeg", () => {
  const pink44 = pinkNoise({ sampleRateHz: 44100, seconds: 6, rmsDbfs: -20, seed: 41 });
  const pink48 = pinkNoise({ sampleRateHz: 48000, seconds: 6, rmsDbfs: -20, seed: 42 });
  const row = (name: string, reference: string, expected: string, r: SpectralAnalysisResult, passed: boolean) =>
    recordAccuracy({ measure: "bandwidth verdict", case: name, reference, expected, measured: (r.metrics.bandwidthHz ?? 0) / 1000, unit: `kHz edge → ${codes(r).join(", ") || "no finding"}`, tolerance: "verdict", passed });

  it.runIf(soxAvailable)("44.1 kHz pink noise resampled to 48 kHz by sox is upsampled from 44.1 kHz", () => {
    const r = analyse([resampleWithSox(pink44, 44100, 48000)], 48000);
    row("pink noise, sox rate -h 44.1 → 48 kHz", "Debian sox", "upsampled from 44.1 kHz", r, codes(r).join() === "upsampled");
    expect(codes(r)).toEqual(["upsampled"]);
    expect(r.findings[0].message).toMatch(/from 44\.1 kHz to 48 kHz/);
  });

  it.runIf(ffmpegEncoders.mp3)("48 kHz pink noise through LAME at 320 kbit/s is band-limited (lossy origin suspected), not upsampled", () => {
    const r = analyse([lossyRoundTrip(pink48, 48000, "libmp3lame", "320k")], 48000);
    row("pink noise, LAME 320 kbit/s at 48 kHz", "Debian ffmpeg (libmp3lame)", "band-limited", r, codes(r).join() === "band-limited");
    expect(codes(r)).toEqual(["band-limited"]);
    expect(r.findings[0].message).toMatch(/lossy origin suspected/);
    // LAME's low-pass at 320 kbit/s is near 20 kHz (common practice).
    expect(r.metrics.bandwidthHz).toBeGreaterThan(19000);
    expect(r.metrics.bandwidthHz).toBeLessThan(21000);
  });

  it.runIf(ffmpegEncoders.mp3)("44.1 kHz pink noise through LAME at 256 kbit/s is band-limited too", () => {
    const r = analyse([lossyRoundTrip(pink44, 44100, "libmp3lame", "256k")], 44100);
    row("pink noise, LAME 256 kbit/s at 44.1 kHz", "Debian ffmpeg (libmp3lame)", "band-limited", r, codes(r).join() === "band-limited");
    expect(codes(r)).toEqual(["band-limited"]);
  });

  it("a shelf at the old Nyquist with something standing above it is not upsampled (the band must be empty to the floor)", () => {
    const estimate = { bandwidthHz: 21700, hasShelf: true, shelfDepthDb: 80, floorSpreadDb: 30 };
    expect(judgeBandwidth(estimate, 48000)).toBeNull();
    expect(judgeBandwidth({ ...estimate, floorSpreadDb: 3 }, 48000)).toEqual({ code: "upsampled", fromSampleRateHz: 44100 });
  });
});

describe("judgeBandwidth", () => {
  const shelf = (bandwidthHz: number) => ({ bandwidthHz, hasShelf: true, shelfDepthDb: 80 });

  it.each([
    [21800, 96000, "upsampled", 44100],
    [23500, 96000, "upsampled", 48000],
    [21000, 48000, "upsampled", 44100],
    [43000, 96000, "upsampled", 88200],
  ] as const)("an edge at %i Hz in a %i Hz file is upsampled", (edgeHz, rateHz, code, fromHz) => {
    // Nyquist of the standard rates (AES5-2018): 22.05, 24, 44.1 kHz.
    expect(judgeBandwidth(shelf(edgeHz), rateHz)).toEqual({ code, fromSampleRateHz: fromHz });
  });

  it.each([
    [16000, 48000],
    [15000, 44100],
    [12000, 96000],
    // An encoder's steep low-pass between 15 and 20.5 kHz at 44.1/48 kHz (its −40 dB point a little higher).
    [20540, 48000],
    [19900, 44100],
    [20500, 44100],
  ])("an edge at %i Hz in a %i Hz file is band-limited", (edgeHz, rateHz) => {
    expect(judgeBandwidth(shelf(edgeHz), rateHz)).toEqual({ code: "band-limited" });
  });

  it("accepts a converter's own anti-alias edge just below Nyquist", () => {
    // An ADC's anti-alias filter is 40 dB down only near Nyquist (0.95 × Nyquist and up, common practice): no finding.
    expect(judgeBandwidth(shelf(21200), 44100)).toBeNull();
    expect(judgeBandwidth({ bandwidthHz: 24000, hasShelf: false, shelfDepthDb: 0 }, 48000)).toBeNull();
  });
});

describe("medianSmooth (the bandwidth's running median)", () => {
  /** The median of each window, by sorting it: the definition the running one must reproduce. */
  function sortedMedians(levelDb: Float64Array, top: number): Float64Array {
    const out = Float64Array.from(levelDb);
    for (let k = 0; k <= top; k++) {
      // ±1/96 octave, 4 … 32 bins (bandwidth.ts's window).
      const half = Math.min(32, Math.max(4, Math.round(k * (2 ** (1 / 96) - 1))));
      const w = Array.from(levelDb.subarray(Math.max(0, k - half), Math.min(top, k + half) + 1)).sort((a, b) => a - b);
      out[k] = w.length % 2 === 1 ? w[(w.length - 1) / 2] : 0.5 * (w[w.length / 2 - 1] + w[w.length / 2]);
    }
    return out;
  }

  it.each([
    ["random levels, 1025 bins", 1025, (k: number, r: () => number) => -60 * r() - k / 100],
    ["many equal values (a stepped spectrum), 8193 bins", 8193, (k: number, r: () => number) => Math.round(4 * r()) - Math.floor(k / 500)],
    ["a floor at −200 dB with tones", 513, (k: number, r: () => number) => (k % 37 === 0 ? -20 * r() : -200)],
  ])("gives each window's sorted median: %s", (_name, n, level) => {
    const r = seededRandom(n);
    const levelDb = new Float64Array(n);
    for (let k = 0; k < n; k++) levelDb[k] = level(k, r);
    const top = n - 2;
    // The kernel (medianKernels.wat, where WebAssembly is, as here) and the JavaScript loop alike.
    for (const kernels of ["auto", "js"] as const) {
      const got = medianSmooth(levelDb, top, kernels);
      expect(Array.from(got)).toEqual(Array.from(sortedMedians(levelDb, top)));
      // The last bin (Nyquist) is left as it was.
      expect(got[n - 1]).toBe(levelDb[n - 1]);
    }
  });

  it("puts NaN last, as a sort does, when a spectrum holds one", () => {
    const levelDb = Float64Array.from({ length: 40 }, (_v, k) => (k === 10 ? NaN : -k));
    const got = medianSmooth(levelDb, 38);
    const expected = Float64Array.from(levelDb);
    for (let k = 0; k <= 38; k++) {
      const w = levelDb.slice(Math.max(0, k - 4), Math.min(38, k + 4) + 1).sort();
      expected[k] = w.length % 2 === 1 ? w[(w.length - 1) / 2] : 0.5 * (w[w.length / 2 - 1] + w[w.length / 2]);
    }
    expect(Array.from(got)).toEqual(Array.from(expected));
  });
});
