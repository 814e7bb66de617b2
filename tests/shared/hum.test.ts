import { describe, expect, it } from "vitest";
import { humFftSize } from "../../shared/src/spectral/hum.ts";
import { lowRateFactor } from "../../shared/src/spectral/lowRateStream.ts";
import { createSpectralAnalyser } from "../../shared/src/spectral/spectralAnalyser.ts";
import type { SpectralAnalysisResult } from "../../shared/src/types/analysis.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../../shared/src/types/settings.ts";
import { blocksOf, humSignal, streamFormat } from "../fixtures/spectralSignals.ts";
import { mix, pinkNoise, sine, whiteNoise } from "../fixtures/synth.ts";

function analyse(channels: Float32Array[], sampleRateHz: number): SpectralAnalysisResult {
  const a = createSpectralAnalyser(streamFormat(channels, sampleRateHz), DEFAULT_ANALYSIS_SETTINGS);
  for (const b of blocksOf(channels)) a.push(b);
  return a.finish();
}

const humFindings = (r: SpectralAnalysisResult) => r.findings.filter((f) => f.code === "hum");

/**
 * Levels are set against the floor the test can compute: white noise of RMS σ reads 4σ²·1.5/N per
 * bin of an N-point Hann analysis (one-sided amplitude² with ENBW 1.5 bins, Harris 1978), so at 48 kHz
 * (N = 32768) noise at −40 dBFS RMS lies at ≈ −77.4 dB a bin, and a harmonic at −50 dBFS peak stands
 * ≈ 27 dB above it; one at −85 dBFS peak does not stand out at all.
 */
describe("hum", () => {
  const rate = 48000;
  const seconds = 6;

  it.each([50, 60] as const)("finds %i Hz mains hum with its harmonics over noise", (mainsHz) => {
    const noise = whiteNoise({ sampleRateHz: rate, seconds, rmsDbfs: -40, seed: mainsHz });
    // Harmonics 1–4 well above the floor, 5 below it.
    const hum = humSignal({ mainsHz, sampleRateHz: rate, seconds, harmonicsDbfs: [-50, -56, -54, -60, -95] });
    const found = humFindings(analyse([mix(noise, hum)], rate));
    expect(found).toHaveLength(1);
    expect(found[0]).toMatchObject({ severity: "warn", channel: null, startSeconds: null, endSeconds: null });
    expect(found[0].message).toMatch(new RegExp(`at ${mainsHz} Hz`));
    expect(found[0].message).toMatch(new RegExp(`4 harmonics up to ${4 * mainsHz} Hz`));
    // The measured fundamental, to 0.05 Hz (the generator's exact frequency).
    const measured = Number(/measured ([\d.]+) Hz/.exec(found[0].message)?.[1]);
    expect(Math.abs(measured - mainsHz)).toBeLessThan(0.05);
  });

  it("follows a tape running 1.5 % fast (50 Hz hum at 50.75 Hz)", () => {
    const noise = whiteNoise({ sampleRateHz: rate, seconds, rmsDbfs: -40, seed: 3 });
    const hum = humSignal({ mainsHz: 50.75, sampleRateHz: rate, seconds, harmonicsDbfs: [-50, -55, -52] });
    const found = humFindings(analyse([mix(noise, hum)], rate));
    expect(found).toHaveLength(1);
    expect(found[0].message).toMatch(/at 50 Hz .*3 harmonics/);
  });

  it("leaves a clean 440 Hz tone alone", () => {
    const r = analyse([sine({ frequencyHz: 440, sampleRateHz: rate, seconds, peakDbfs: -6 })], rate);
    expect(humFindings(r)).toEqual([]);
  });

  it.each([440, 997])("leaves a clean one-second %i Hz tone at −12 dBFS, quantised to 24 bits, alone", (hz) => {
    // Far below the tone, at 60 Hz, a single-precision transform's rounding once stood 18 dB over the
    // true floor (24-bit quantisation noise) and read as hum; the fine spectrum is computed in double.
    const tone = sine({ frequencyHz: hz, sampleRateHz: rate, seconds: 1, peakDbfs: -12 });
    for (let i = 0; i < tone.length; i++) tone[i] = Math.round(tone[i] * 2 ** 23) / 2 ** 23;
    expect(humFindings(analyse([tone], rate))).toEqual([]);
  });

  it("leaves noise alone, white or pink", () => {
    expect(humFindings(analyse([whiteNoise({ sampleRateHz: rate, seconds, rmsDbfs: -20, seed: 8 })], rate))).toEqual([]);
    expect(humFindings(analyse([pinkNoise({ sampleRateHz: rate, seconds, rmsDbfs: -20, seed: 8 })], rate))).toEqual([]);
  });

  it("does not call a 100 Hz note hum: the 50 Hz fundamental is missing", () => {
    const noise = whiteNoise({ sampleRateHz: rate, seconds, rmsDbfs: -40, seed: 4 });
    const note = mix(
      sine({ frequencyHz: 100, sampleRateHz: rate, seconds, peakDbfs: -20 }),
      sine({ frequencyHz: 200, sampleRateHz: rate, seconds, peakDbfs: -26 }),
      sine({ frequencyHz: 300, sampleRateHz: rate, seconds, peakDbfs: -30 }),
    );
    expect(humFindings(analyse([mix(noise, note)], rate))).toEqual([]);
  });

  it("names the channel when only one channel hums", () => {
    // Channel 0 loud noise, channel 1 quiet noise with hum 30 dB over its own floor: averaged over both
    // channels the hum stands only ≈ 10 dB over the (channel-0-dominated) floor, under the 12 dB threshold.
    const loud = whiteNoise({ sampleRateHz: rate, seconds, rmsDbfs: -30, seed: 12 });
    const quiet = whiteNoise({ sampleRateHz: rate, seconds, rmsDbfs: -50, seed: 13 });
    const hum = humSignal({ mainsHz: 60, sampleRateHz: rate, seconds, harmonicsDbfs: [-57.4, -60, -62] });
    const found = humFindings(analyse([loud, mix(quiet, hum)], rate));
    expect(found.map((f) => f.channel)).toEqual([1]);
    expect(found[0].message).toMatch(/at 60 Hz/);
  });

  it("resolves 1.5 Hz or better: 4096-point frames of the ≈ 6 kHz decimated stream at every rate", () => {
    // 50 and 60 Hz ± 2 % must be told apart with the Hann mainlobe (±2 bins; Harris 1978) inside ±3 Hz.
    for (const rate of [8000, 11025, 44100, 48000, 96000, 192000, 384000]) {
      const lowRate = rate / lowRateFactor(rate);
      expect(lowRate).toBeGreaterThan(4000);
      expect(lowRate).toBeLessThan(8500);
      expect(lowRate / humFftSize(lowRate)).toBeLessThanOrEqual(1.5);
    }
    expect(lowRateFactor(48000)).toBe(8);
    expect(humFftSize(48000 / 8)).toBe(4096);
  });
});
