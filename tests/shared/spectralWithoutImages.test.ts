/**
 * A scan that draws no image runs the spectral analysis with `images: false` (issue #22: a third of a
 * 1 s file's spectral work is the spectrogram grid, its low-frequency detail and the waveform envelope).
 * What the report holds must not depend on that: the same metrics, findings and fingerprint, to the bit.
 */
import { describe, expect, it } from "vitest";
import { createFileAnalysis, imagesOf } from "../../shared/src/engine/fileAnalysis.ts";
import { createSpectralAnalyser } from "../../shared/src/spectral/spectralAnalyser.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../../shared/src/types/settings.ts";
import { blocksOf, humSignal, streamFormat, windowedSincLowpass } from "../fixtures/spectralSignals.ts";
import { mix, pinkNoise, silence, sine, whiteNoise } from "../fixtures/synth.ts";

const RATE = 48000;

function spectral(channels: Float32Array[], images: boolean) {
  const a = createSpectralAnalyser(streamFormat(channels, RATE), DEFAULT_ANALYSIS_SETTINGS, { images });
  for (const b of blocksOf(channels, 4096)) a.push(b);
  return a.finish();
}

const noise = (seed: number, seconds = 1) => pinkNoise({ sampleRateHz: RATE, seconds, rmsDbfs: -20, seed });

const cases: [string, () => Float32Array[]][] = [
  ["1 s of stereo pink noise", () => [noise(1), noise(2)]],
  ["3 s of mono hum over noise", () => [mix(humSignal({ mainsHz: 50, sampleRateHz: RATE, seconds: 3, harmonicsDbfs: [-30, -36, -40, -44] }), pinkNoise({ sampleRateHz: RATE, seconds: 3, rmsDbfs: -60, seed: 9 }))]],
  // A shelf on one channel only: the per-channel estimates are the ones judged then.
  ["stereo, one channel low-passed at 16 kHz", () => [windowedSincLowpass(whiteNoise({ sampleRateHz: RATE, seconds: 2, rmsDbfs: -20, seed: 3 }), RATE, 16000), whiteNoise({ sampleRateHz: RATE, seconds: 2, rmsDbfs: -20, seed: 4 })]],
  ["both channels low-passed at 16 kHz", () => [1, 2].map((seed) => windowedSincLowpass(whiteNoise({ sampleRateHz: RATE, seconds: 2, rmsDbfs: -20, seed }), RATE, 16000))],
  ["silence", () => [silence({ sampleRateHz: RATE, seconds: 1 }), silence({ sampleRateHz: RATE, seconds: 1 })]],
  ["300 samples of a tone", () => [sine({ frequencyHz: 1000, sampleRateHz: RATE, seconds: 300 / RATE, peakDbfs: -6 })]],
  ["a tone over noise, 0.5 s", () => [mix(noise(5, 0.5), sine({ frequencyHz: 440, sampleRateHz: RATE, seconds: 0.5, peakDbfs: -12 }))]],
];

describe("spectral analysis without images", () => {
  it.each(cases)("%s: the same metrics and findings, no grid and no envelope", (_name, make) => {
    const channels = make();
    const withImages = spectral(channels, true);
    const without = spectral(channels, false);
    expect(without.spectrogram).toBeNull();
    expect(without.channelSpectrograms).toBeNull();
    expect(without.waveform).toBeNull();
    expect(withImages.spectrogram).not.toBeNull();
    expect(without.metrics).toEqual(withImages.metrics);
    expect(without.findings).toEqual(withImages.findings);
  });

  it("finds the hum and the shelves in those cases, so the finding paths are exercised", () => {
    expect(spectral(cases[1][1](), false).findings.map((f) => f.code)).toEqual(["hum"]);
    const one = spectral(cases[2][1](), false);
    const both = spectral(cases[3][1](), false);
    expect(both.findings.map((f) => [f.code, f.channel])).toEqual([["band-limited", null]]);
    expect(one.findings.map((f) => [f.code, f.channel])).toEqual([["band-limited", 0]]);
  });

  it("keeps the report's part of the whole file analysis, fingerprint included, and says when images are missing", () => {
    const channels = [noise(7, 2), noise(8, 2)];
    const run = (images: boolean) => {
      const a = createFileAnalysis(streamFormat(channels, RATE), DEFAULT_ANALYSIS_SETTINGS, { images });
      for (const b of blocksOf(channels, 4096)) a.push(b);
      return a.finish();
    };
    const withImages = run(true);
    const without = run(false);
    expect(without.metrics).toEqual(withImages.metrics);
    expect(without.findings).toEqual(withImages.findings);
    expect(without.fingerprint).toBe(withImages.fingerprint);
    expect(imagesOf(withImages).waveform.columns).toBeGreaterThan(0);
    expect(() => imagesOf(without)).toThrow(/images: false/);
  });
});
