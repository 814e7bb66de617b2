import { describe, expect, it } from "vitest";
import { createFrameCollector } from "../../shared/src/spectral/frameCollector.ts";
import {
  chooseLongFrameSchedule,
  chooseStftSchedule,
  defaultFftSize,
  evenSchedule,
  frameStart,
} from "../../shared/src/spectral/stftSchedule.ts";
import { createSpectralAnalyser } from "../../shared/src/spectral/spectralAnalyser.ts";
import { spectrogramPlotArea } from "../../shared/src/render/layout.ts";
import type { SpectralAnalysisResult } from "../../shared/src/types/analysis.ts";
import { DEFAULT_ANALYSIS_SETTINGS, type AnalysisSettings } from "../../shared/src/types/settings.ts";
import { blocksOf, streamFormat } from "../fixtures/spectralSignals.ts";
import { mix, pinkNoise, sine, whiteNoise } from "../fixtures/synth.ts";

function analyse(channels: Float32Array[], sampleRateHz: number, blockFrames = 4096, settings = DEFAULT_ANALYSIS_SETTINGS): SpectralAnalysisResult {
  const a = createSpectralAnalyser(streamFormat(channels, sampleRateHz), settings);
  for (const b of blocksOf(channels, blockFrames)) a.push(b);
  return a.finish();
}

describe("STFT sizes and schedule", () => {
  it("uses 2048 points at 44.1/48 kHz and scales with the rate (issue #4)", () => {
    expect(defaultFftSize(44100)).toBe(2048);
    expect(defaultFftSize(48000)).toBe(2048);
    expect(defaultFftSize(96000)).toBe(4096);
    expect(defaultFftSize(192000)).toBe(8192);
    expect(defaultFftSize(384000)).toBe(16384);
    expect(defaultFftSize(8000)).toBe(256);
  });

  it("keeps the default 50 % overlap on a minute of mono", () => {
    const s = chooseStftSchedule({ totalFrames: 48000 * 60, fftSize: 2048, columns: 1432, channels: 1, hopSize: null });
    expect(s.hopSize).toBe(1024);
    // Frames from the definition of an STFT with hop H over L samples: ⌊(L − N)/H⌋ + 1, plus the end-aligned one.
    expect(s.frameCount).toBe(Math.floor((48000 * 60 - 2048) / 1024) + 1 + 1);
  });

  it("overlaps more on a short file so that every column gets a frame of its own", () => {
    const s = chooseStftSchedule({ totalFrames: 48000 * 10, fftSize: 2048, columns: 1432, channels: 2, hopSize: null });
    expect(s.hopSize).toBeLessThan(1024);
    expect(s.hopSize).toBeGreaterThanOrEqual(2048 / 8);
    expect(s.frameCount).toBeGreaterThanOrEqual(1432);
  });

  it("bounds the frames of a 3-hour file by the image width, not its length", () => {
    const columns = 1432;
    const threeHours = 3 * 3600 * 48000;
    const s = chooseStftSchedule({ totalFrames: threeHours, fftSize: 2048, columns, channels: 2, hopSize: null });
    expect(s.frameCount).toBeLessThanOrEqual(columns + 1);
    expect(s.frameCount).toBeGreaterThanOrEqual(columns - 1);
    // The frames still span the whole file.
    expect(frameStart(s, s.frameCount - 1) + s.frameSize).toBe(threeHours);
    const long = chooseLongFrameSchedule(threeHours, 48000);
    expect(long?.frameCount).toBeLessThanOrEqual(32);
  });

  it("takes an explicit hop as given, and rejects a bad one", () => {
    const s = chooseStftSchedule({ totalFrames: 100000, fftSize: 1024, columns: 100, channels: 1, hopSize: 300 });
    expect(s.hopSize).toBe(300);
    expect(() => chooseStftSchedule({ totalFrames: 100, fftSize: 1024, columns: 100, channels: 1, hopSize: 0 })).toThrow(
      /hopSize must be a positive integer, got 0/,
    );
  });
});

describe("frame collector", () => {
  it("cuts frames at the schedule's starts, across block boundaries, ending on the last sample", () => {
    const total = 10007;
    const x = new Float32Array(total);
    for (let i = 0; i < total; i++) x[i] = i;
    const schedule = evenSchedule(total, 1024, 700);
    const starts: number[] = [];
    const collector = createFrameCollector({
      channels: 1,
      schedule,
      onFrame(frames) {
        // A frame is x[start … start + N) by definition; here x[i] = i names its own index.
        const start = frames[0][0];
        for (let j = 0; j < 1024; j++) expect(frames[0][j]).toBe(start + j);
        starts.push(start);
      },
    });
    for (const b of blocksOf([x], 333)) collector.push(b);
    const expected = [];
    for (let k = 0; k * 700 <= total - 1024; k++) expected.push(k * 700);
    expected.push(total - 1024);
    expect(starts).toEqual(expected);
  });

  it("skips the gaps of a sparse schedule and accepts a producer that leaves them out", () => {
    const schedule = evenSchedule(100000, 256, 10000);
    const starts: number[] = [];
    const collector = createFrameCollector({ channels: 1, schedule, onFrame: (f) => starts.push(f[0][0]) });
    const block = new Float32Array(256);
    for (let k = 0; k < schedule.frameCount; k++) {
      const start = collector.nextNeededSample();
      for (let j = 0; j < 256; j++) block[j] = start + j;
      collector.push({ channels: [block], frames: 256, startFrame: start });
    }
    expect(starts[1]).toBe(10000);
    expect(starts[starts.length - 1]).toBe(100000 - 256);
    expect(collector.nextNeededSample()).toBe(Infinity);
    const fresh = createFrameCollector({ channels: 1, schedule, onFrame: () => undefined });
    fresh.push({ channels: [block], frames: 100, startFrame: 0 });
    expect(() => fresh.push({ channels: [block], frames: 100, startFrame: 500 })).toThrow(/expected samples from 100 on, got a block starting at 500/);
  });
});

describe("dominant frequency", () => {
  it.each([
    [48000, 997],
    [48000, 1234.5],
    [44100, 6300.3],
    [96000, 15011.7],
    [8000, 440],
  ])("reads a pure tone at %i Hz / %f Hz within 0.1 bin", (rate, hz) => {
    const r = analyse([sine({ frequencyHz: hz, sampleRateHz: rate, seconds: 3, peakDbfs: -12 })], rate);
    const binHz = rate / defaultFftSize(rate);
    // The generator's frequency is the reference; issue #4: within 0.1 bin.
    expect(Math.abs((r.metrics.dominantFrequencyHz ?? 0) - hz)).toBeLessThan(0.1 * binHz);
  });

  it("does not call pink noise's subsonic tail dominant: the search starts at 20 Hz", () => {
    const r = analyse([pinkNoise({ sampleRateHz: 48000, seconds: 3, rmsDbfs: -20, seed: 6 })], 48000);
    // 20 Hz: the lower limit of the audio band (common practice).
    expect(r.metrics.dominantFrequencyHz).toBeGreaterThanOrEqual(20);
  });

  it("picks the stronger of two tones, not a DC offset's skirt", () => {
    const x = mix(
      sine({ frequencyHz: 300, sampleRateHz: 48000, seconds: 2, peakDbfs: -20 }),
      sine({ frequencyHz: 3000, sampleRateHz: 48000, seconds: 2, peakDbfs: -10 }),
    );
    for (let i = 0; i < x.length; i++) x[i] += 0.05;
    const r = analyse([x], 48000);
    expect(r.metrics.dominantFrequencyHz).toBeCloseTo(3000, 0);
  });
});

describe("spectral analyser", () => {
  const settings: AnalysisSettings = DEFAULT_ANALYSIS_SETTINGS;
  const plot = spectrogramPlotArea(settings.spectrogram.width, settings.spectrogram.height);

  it("gives the same answer whatever the block size (it copies what it keeps)", () => {
    const x = whiteNoise({ sampleRateHz: 48000, seconds: 3, rmsDbfs: -20, seed: 2 });
    const tone = sine({ frequencyHz: 50, sampleRateHz: 48000, seconds: 3, peakDbfs: -30 });
    const signal = mix(x, tone);
    const small = analyse([signal, x], 48000, 1000);
    const large = analyse([signal, x], 48000, 65536);
    expect(small.metrics).toEqual(large.metrics);
    for (let i = 0; i < small.spectrogram.db.length; i += 997) {
      expect(small.spectrogram.db[i]).toBeCloseTo(large.spectrogram.db[i], 4);
    }
  });

  it("copes with silence: nulls in the metrics, −Infinity in the grid, no findings", () => {
    const r = analyse([new Float32Array(96000), new Float32Array(96000)], 48000);
    expect(r.metrics.bandwidthHz).toBeNull();
    expect(r.metrics.dominantFrequencyHz).toBeNull();
    expect(r.findings).toEqual([]);
    expect(r.spectrogram.db.every((v) => v === -Infinity)).toBe(true);
    expect(r.waveform.max.every((v) => v === 0)).toBe(true);
  });

  it.each([1, 100, 1500, 3000])("copes with a file of %i samples", (n) => {
    const x = sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: n / 48000, peakDbfs: -6 });
    const r = analyse([x], 48000);
    expect(r.spectrogram.columns).toBe(plot.width);
    expect(r.spectrogram.db.some((v) => Number.isNaN(v))).toBe(false);
    expect(r.waveform.max.every((v) => Number.isFinite(v))).toBe(true);
    if (n >= 1500) expect(Math.abs((r.metrics.dominantFrequencyHz ?? 0) - 1000)).toBeLessThan(48000 / 1024);
  });

  it("handles an empty file", () => {
    const r = analyse([new Float32Array(0)], 48000);
    expect(r.metrics.bandwidthHz).toBeNull();
    expect(r.spectrogram.db.every((v) => Number.isNaN(v))).toBe(true);
  });

  it.each([8000, 22050, 44100, 96000, 192000, 384000])("reads a 1 kHz tone at %i Hz", (rate) => {
    const r = analyse([sine({ frequencyHz: 1000, sampleRateHz: rate, seconds: 1, peakDbfs: -6 })], rate, 16384);
    expect(Math.abs((r.metrics.dominantFrequencyHz ?? 0) - 1000)).toBeLessThan(rate / defaultFftSize(rate) / 10);
    const octave = r.metrics.bands.octave.find((b) => b.centerHz === 1000);
    // −6 dBFS peak is −9.03 dB mean square (common practice).
    expect(octave?.db).toBeCloseTo(-9.03, 0);
  });

  it.each([1, 2, 6, 8])("handles %i channels, with per-channel grids on request", (channels) => {
    const parts = Array.from({ length: channels }, (_, c) =>
      sine({ frequencyHz: 500 * (c + 1), sampleRateHz: 48000, seconds: 1, peakDbfs: -20 }),
    );
    const r = analyse(parts, 48000, 4096, { ...settings, spectrogram: { ...settings.spectrogram, perChannel: true } });
    expect(r.channelSpectrograms).toHaveLength(channels);
    const grid = r.channelSpectrograms?.[channels - 1];
    if (!grid) throw new Error("no per-channel grid");
    // The last channel's own tone (500·channels Hz) is bright in its own grid, near its row.
    let row = 0;
    while (grid.rowFrequencyHz[row] < 500 * channels) row++;
    const mid = Math.floor(grid.columns / 2);
    expect(grid.db[mid * grid.rows + row]).toBeGreaterThan(-40);
    if (channels > 1) {
      // …and absent from channel 0's grid.
      expect(r.channelSpectrograms?.[0].db[mid * grid.rows + row]).toBeLessThan(-60);
    }
  });

  it("keeps the grid at the plot's size whatever the duration (2 s and 1 h)", () => {
    const short = analyse([whiteNoise({ sampleRateHz: 48000, seconds: 2, rmsDbfs: -20 })], 48000);
    // One hour pushed as reused noise blocks: the analyser's cost must not grow with the grid.
    const block = whiteNoise({ sampleRateHz: 48000, seconds: 65536 / 48000, rmsDbfs: -20, seed: 4 });
    const total = 3600 * 48000;
    const a = createSpectralAnalyser({ sampleRateHz: 48000, channels: 1, bitDepth: 24, encoding: "pcm", totalFrames: total }, settings);
    for (let start = 0; start < total; start += block.length) {
      a.push({ channels: [block], frames: Math.min(block.length, total - start), startFrame: start });
    }
    const long = a.finish();
    for (const r of [short, long]) {
      expect([r.spectrogram.columns, r.spectrogram.rows]).toEqual([plot.width, plot.height]);
      expect(r.spectrogram.db.length).toBe(plot.width * plot.height);
      expect(r.waveform.columns).toBe(plot.width);
    }
    expect(long.spectrogram.durationSeconds).toBe(3600);
    expect(long.spectrogram.db.some((v) => Number.isNaN(v))).toBe(false);
  });

  it("rejects blocks that do not match the stream's format", () => {
    const a = createSpectralAnalyser({ sampleRateHz: 48000, channels: 2, bitDepth: 16, encoding: "pcm", totalFrames: 100 }, settings);
    expect(() => a.push({ channels: [new Float32Array(100)], frames: 100, startFrame: 0 })).toThrow(/2 channel arrays .* got 1/);
    expect(() => a.push({ channels: [new Float32Array(10), new Float32Array(10)], frames: 100, startFrame: 0 })).toThrow(
      /hold block.frames = 100 samples, got 10/,
    );
    expect(() => createSpectralAnalyser({ sampleRateHz: 0, channels: 1, bitDepth: 16, encoding: "pcm", totalFrames: 1 }, settings)).toThrow(
      /sampleRateHz must be between .* got 0/,
    );
    expect(() =>
      createSpectralAnalyser({ sampleRateHz: 48000, channels: 1, bitDepth: 16, encoding: "pcm", totalFrames: 1 }, { ...settings, fftSize: 1000 }),
    ).toThrow(/power of two > 1, got 1000/);
  });
});

describe("files too short for a spectrum", () => {
  it("leave bandwidth, dominant frequency and band levels empty under 64 samples, and fill them from 64 on", () => {
    // 63 samples of a 1 kHz sine zero-padded to the smallest frame would read as a broad, full-band spectrum.
    const tone = sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: 1, peakDbfs: -6 });
    for (const n of [1, 63]) {
      const r = analyse([tone.slice(0, n)], 48000);
      expect(r.metrics.bandwidthHz, `${n} samples`).toBeNull();
      expect(r.metrics.dominantFrequencyHz, `${n} samples`).toBeNull();
      expect([...r.metrics.bands.octave, ...r.metrics.bands.third].every((b) => b.db === null), `${n} samples`).toBe(true);
      expect(r.metrics.bands.octave.length).toBeGreaterThan(0);
      expect(r.findings).toEqual([]);
    }
    const enough = analyse([tone.slice(0, 64)], 48000);
    expect(enough.metrics.dominantFrequencyHz).not.toBeNull();
    expect(enough.metrics.bands.octave.some((b) => b.db !== null)).toBe(true);
  });
});
