import { describe, expect, it } from "vitest";
import { exactMidbandHz, fractionalOctaveBands, nominalMidbandHz } from "../../shared/src/spectral/bands.ts";
import { createSpectralAnalyser } from "../../shared/src/spectral/spectralAnalyser.ts";
import type { SpectralAnalysisResult } from "../../shared/src/types/analysis.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../../shared/src/types/settings.ts";
import { blocksOf, streamFormat } from "../fixtures/spectralSignals.ts";
import { rmsDbfs, sine, whiteNoise } from "../fixtures/synth.ts";

/**
 * Nominal one-third-octave mid-band frequencies 31.5 Hz … 16 kHz, as tabulated in IEC 61260-1:2014,
 * Annex E (the ISO 266 preferred frequencies); typed in from memory.
 */
const NOMINAL_THIRDS_HZ = [
  31.5, 40, 50, 63, 80, 100, 125, 160, 200, 250, 315, 400, 500, 630, 800, 1000, 1250, 1600, 2000, 2500, 3150, 4000, 5000,
  6300, 8000, 10000, 12500, 16000,
];
/** The octave series is every third of those (IEC 61260-1:2014, Annex E; from memory). */
const NOMINAL_OCTAVES_HZ = [31.5, 63, 125, 250, 500, 1000, 2000, 4000, 8000, 16000];

function analyse(channels: Float32Array[], sampleRateHz: number): SpectralAnalysisResult {
  const a = createSpectralAnalyser(streamFormat(channels, sampleRateHz), DEFAULT_ANALYSIS_SETTINGS);
  for (const b of blocksOf(channels)) a.push(b);
  return a.finish();
}

const sumDb = (levels: number[]): number => 10 * Math.log10(levels.reduce((s, db) => s + 10 ** (db / 10), 0));

describe("IEC 61260-1 base-ten bands", () => {
  it("reproduces the exact one-third-octave mid-band frequencies f_m = 1000·G^(x/3), G = 10^(3/10)", () => {
    for (let x = -15; x <= 12; x++) {
      // IEC 61260-1:2014, 5.2 and 5.4: base-ten ratio and odd-b mid-band formula, computed here independently.
      const expected = 1000 * 10 ** ((3 / 10) * (x / 3));
      expect(exactMidbandHz(x, 3) / expected).toBeCloseTo(1, 12);
    }
  });

  it("rounds them to the nominal values of the standard's table", () => {
    const nominal: number[] = [];
    for (let x = -15; x <= 12; x++) nominal.push(nominalMidbandHz(exactMidbandHz(x, 3)));
    expect(nominal).toEqual(NOMINAL_THIRDS_HZ);
    // Nominal values stay within 1 % of the exact ones (ISO 266 R10 rounding; 16 kHz is 0.95 % off).
    for (let x = -15; x <= 12; x++) {
      expect(Math.abs(nominalMidbandHz(exactMidbandHz(x, 3)) / exactMidbandHz(x, 3) - 1)).toBeLessThan(0.01);
    }
  });

  it("lists the octave and third series up to 16 kHz at 48 kHz, with edges G^(±1/2b) about the mid-band", () => {
    expect(fractionalOctaveBands(1, 48000).map((b) => b.centerHz)).toEqual(NOMINAL_OCTAVES_HZ);
    const thirds = fractionalOctaveBands(3, 48000);
    expect(thirds.map((b) => b.centerHz)).toEqual(NOMINAL_THIRDS_HZ);
    for (const b of thirds) {
      // IEC 61260-1:2014, 5.5: f1 = f_m·G^(−1/6), f2 = f_m·G^(1/6) for thirds.
      expect(b.upperHz / b.exactCenterHz).toBeCloseTo(10 ** (3 / 10 / 6), 12);
      expect(Math.sqrt(b.lowerHz * b.upperHz) / b.exactCenterHz).toBeCloseTo(1, 12);
    }
  });

  it("stops at the bands whose mid-band frequency lies below Nyquist", () => {
    const octaves = fractionalOctaveBands(1, 8000).map((b) => b.centerHz);
    const thirds = fractionalOctaveBands(3, 8000).map((b) => b.centerHz);
    // 4 kHz's exact mid-band 3981 Hz sits under the 4 kHz Nyquist; 5 kHz's 5012 Hz does not.
    expect(octaves[octaves.length - 1]).toBe(4000);
    expect(thirds[thirds.length - 1]).toBe(4000);
  });
});

describe("band levels", () => {
  it("puts a 1 kHz tone's energy in the 1 kHz octave and third bands", () => {
    const tone = sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: 3, peakDbfs: -10 });
    const r = analyse([tone], 48000);
    const octave = new Map(r.metrics.bands.octave.map((b) => [b.centerHz, b.db]));
    const third = new Map(r.metrics.bands.third.map((b) => [b.centerHz, b.db]));
    // Mean square of a sine is peak²/2: −10 dBFS peak → −13.01 dB (common practice), checked against the fixture's RMS.
    expect(rmsDbfs(tone)).toBeCloseTo(-13.01, 2);
    expect(octave.get(1000)).toBeCloseTo(rmsDbfs(tone), 1);
    expect(third.get(1000)).toBeCloseTo(rmsDbfs(tone), 1);
    for (const hz of [500, 2000]) expect(octave.get(hz) ?? 0).toBeLessThan(-13 - 40);
  });

  it("splits white noise by bandwidth: each third holds its share of the mean square", () => {
    const noise = whiteNoise({ sampleRateHz: 48000, seconds: 8, rmsDbfs: -20, seed: 11 });
    const r = analyse([noise], 48000);
    const thirds = fractionalOctaveBands(3, 48000);
    r.metrics.bands.third.forEach((level, i) => {
      // White noise has a flat spectral density: a band of width B holds B/Nyquist of the mean square (definition).
      const expected = rmsDbfs(noise) + 10 * Math.log10((thirds[i].upperHz - thirds[i].lowerHz) / 24000);
      expect(level.db).not.toBeNull();
      expect(Math.abs((level.db ?? 0) - expected)).toBeLessThan(1);
    });
    const covered = (thirds[thirds.length - 1].upperHz - thirds[0].lowerHz) / 24000;
    expect(sumDb(r.metrics.bands.third.map((b) => b.db ?? -Infinity))).toBeCloseTo(rmsDbfs(noise) + 10 * Math.log10(covered), 1);
  });

  it("reports null for every band of a silent file", () => {
    const r = analyse([new Float32Array(48000)], 48000);
    expect(r.metrics.bands.octave.length).toBe(10);
    expect(r.metrics.bands.octave.every((b) => b.db === null)).toBe(true);
    expect(r.metrics.bands.third.every((b) => b.db === null)).toBe(true);
  });
});
