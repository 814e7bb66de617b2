/**
 * A close-up's pictures from its window's samples (issue #16): a spectrogram grid at ≤ 10 ms a column and
 * the min/max waveform envelope, made with the overview's own pieces (FFT, row layout, grid accumulator,
 * waveform accumulator), so the renderers in shared/src/render draw them exactly as the overview.
 */
import { createSpectrumAnalyzer, type SpectrumAnalyzer } from "../spectral/fft.ts";
import { assembleGrid, createSpectrogramAccumulator, spectrogramRowLayout } from "../spectral/spectrogramGrid.ts";
import { defaultFftSize, evenSchedule, frameStart } from "../spectral/stftSchedule.ts";
import { createWaveformAccumulator } from "../spectral/waveformEnvelope.ts";
import type { SpectrogramGrid, WaveformEnvelope } from "../types/analysis.ts";

/** The contract's coarsest close-up resolution, s a pixel column. */
export const CLOSEUP_MAX_SECONDS_PER_COLUMN = 0.01;
const MIN_COLUMNS = 64;

/** Plot columns for a window: one per 10 ms (at least 64), so secondsPerColumn ≤ 0.01. */
export function closeupColumns(frames: number, sampleRateHz: number): { columns: number; secondsPerColumn: number } {
  const seconds = frames / sampleRateHz;
  const columns = Math.max(MIN_COLUMNS, Math.ceil(seconds / CLOSEUP_MAX_SECONDS_PER_COLUMN - 1e-9));
  return { columns, secondsPerColumn: seconds / columns };
}

/**
 * A quarter of the overview's FFT (512 points, ≈ 11 ms at 48 kHz): about one 10 ms column, so a click or a
 * dropout stays one or two columns wide; bins are ≈ 94 Hz, and the lowest rows of a log axis interpolate
 * between them as in the overview. One frame a column, the channels' powers averaged as in the overview.
 */
export function closeupSpectrogramGrid(
  samples: readonly Float32Array[],
  sampleRateHz: number,
  columns: number,
  rows: number,
  frequencyScale: "log" | "linear",
  /** Analysers already made, by FFT size (one file's close-ups share them: a plan each costs ≈ 0.5 ms). */
  analyzers?: Map<number, SpectrumAnalyzer>,
): SpectrogramGrid {
  const frames = samples[0]?.length ?? 0;
  const fftSize = closeupFftSize(frames, sampleRateHz);
  let analyzer = analyzers?.get(fftSize);
  if (!analyzer) {
    analyzer = createSpectrumAnalyzer(fftSize);
    analyzers?.set(fftSize, analyzer);
  }
  const layout = spectrogramRowLayout(rows, frequencyScale, sampleRateHz, fftSize);
  const hop = Math.max(1, Math.floor(Math.max(0, frames - fftSize) / columns));
  const schedule = evenSchedule(frames, fftSize, hop);
  const accumulator = createSpectrogramAccumulator({
    columns,
    layout,
    rowFrom: 0,
    rowTo: rows,
    aggregate: "max",
    binHz: sampleRateHz / fftSize,
    binCount: analyzer.binCount,
    powerScale: 1,
    schedule,
    totalFrames: frames,
  });
  const frame = new Float32Array(fftSize);
  const power = new Float64Array(analyzer.binCount);
  const mean = new Float64Array(analyzer.binCount);
  const share = 1 / Math.max(1, samples.length);
  // With 1, 2, 4 or 8 channels the share is a power of two, so scaling the sum once gives the very doubles
  // that summing the scaled powers does (IEEE 754: scaling by 2^-k is exact): the transform then adds into
  // the sum itself, with no spectrum stored and read back. Other counts keep the scaled sum.
  const sumThenScale = (samples.length & (samples.length - 1)) === 0;
  for (let k = 0; k < schedule.frameCount; k++) {
    const start = frameStart(schedule, k);
    mean.fill(0);
    for (const x of samples) {
      let input: Float32Array;
      if (start + fftSize <= frames) input = x.subarray(start, start + fftSize);
      else {
        // A window shorter than one frame: zero-padded.
        frame.fill(0);
        frame.set(x.subarray(start, frames));
        input = frame;
      }
      if (sumThenScale) analyzer.addAmplitudeSquared(input, mean);
      else {
        analyzer.amplitudeSquared(input, power);
        for (let b = 0; b < power.length; b++) mean[b] += power[b] * share;
      }
    }
    if (sumThenScale && share !== 1) for (let b = 0; b < mean.length; b++) mean[b] *= share;
    accumulator.addFrame(mean, k);
  }
  return assembleGrid([{ accumulator }], columns, layout, frames / sampleRateHz, sampleRateHz);
}

/** The close-up's FFT size for a window of `frames`: a quarter of the overview's, halved down to the window (≥ 64). */
export function closeupFftSize(frames: number, sampleRateHz: number): number {
  let fftSize = Math.max(64, defaultFftSize(sampleRateHz) / 4);
  while (fftSize > 64 && fftSize > frames) fftSize /= 2;
  return fftSize;
}

export function closeupWaveform(samples: readonly Float32Array[], sampleRateHz: number, columns: number): WaveformEnvelope {
  const frames = samples[0]?.length ?? 0;
  const accumulator = createWaveformAccumulator({ columns, totalFrames: frames, sampleRateHz });
  accumulator.push({ channels: samples as Float32Array[], frames, startFrame: 0 });
  return accumulator.finish();
}
