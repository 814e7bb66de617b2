import { describe, expect, it } from "vitest";
import { judgeBandwidth } from "../../shared/src/spectral/bandwidth.ts";
import { createSpectralAnalyser } from "../../shared/src/spectral/spectralAnalyser.ts";
import type { SpectralAnalysisResult } from "../../shared/src/types/analysis.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../../shared/src/types/settings.ts";
import { blocksOf, resampleWithSox, streamFormat, windowedSincLowpass } from "../fixtures/spectralSignals.ts";
import { mix, pinkNoise, sine, whiteNoise } from "../fixtures/synth.ts";

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
  ])("an edge at %i Hz in a %i Hz file is band-limited", (edgeHz, rateHz) => {
    expect(judgeBandwidth(shelf(edgeHz), rateHz)).toEqual({ code: "band-limited" });
  });

  it("accepts a converter's own anti-alias edge just below Nyquist", () => {
    // 0.9 × Nyquist is where ADC anti-alias filters start (common practice): no finding.
    expect(judgeBandwidth(shelf(19900), 44100)).toBeNull();
    expect(judgeBandwidth({ bandwidthHz: 24000, hasShelf: false, shelfDepthDb: 0 }, 48000)).toBeNull();
  });
});
