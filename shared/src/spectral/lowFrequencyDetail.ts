/**
 * Finer rows for the bottom of a log spectrogram. A 2048-point frame at 48 kHz has 23 Hz bins, so
 * everything under ≈ 100 Hz (hum, rumble, the lines that matter most down there) smears into one blob.
 * Up to ≈ 350–560 Hz the rows therefore come from the same audio decimated to ≈ 6 kHz (lowRateStream.ts)
 * and analysed with 2048-point frames (≈ 3 Hz bins, 0.34 s). Their power is put on the main analysis's bin
 * bandwidth, so a noise floor runs on across the hand-over; a steady tone there reads up to
 * 10·log10(decimation) dB brighter than on the scale bar (9 dB at 48 kHz).
 */
import { createSpectrumAnalyzer } from "./fft.ts";
import { createFrameCollector, type FrameCollector } from "./frameCollector.ts";
import { createSpectrogramAccumulator, type RowLayout, type SpectrogramAccumulator } from "./spectrogramGrid.ts";
import { chooseStftSchedule } from "./stftSchedule.ts";

/**
 * Rows up to LOW_DETAIL_FULL_HZ come from the detail analysis alone; above it the detail fades out (in
 * power, linearly in log frequency) until LOW_DETAIL_TOP_HZ, where the main analysis has ≈ 24 bins a
 * third-octave. Past 560 Hz what folds back from the decimation would be cut less than 60 dB.
 */
export const LOW_DETAIL_FULL_HZ = 350;
export const LOW_DETAIL_TOP_HZ = 560;
const LOW_DETAIL_FFT_SIZE = 2048;
/**
 * On long files, one frame a column for mono and one every other column and channel for stereo: each
 * frame is 8× longer than a main frame, so this still covers 40 % of a 600 s stereo file (0.34 s every
 * 0.84 s) while keeping the decimation, the costliest step, to that share of the samples.
 */
const LOW_DETAIL_FFTS_PER_COLUMN = 1;
const LOW_DETAIL_MIN_FRAMES_PER_COLUMN = 0.5;

export interface LowFrequencyDetail {
  /** Rows [0, rows) of the layout belong to the detail analysis, rows [fadeFromRow, rows) only in part. */
  rows: number;
  fadeFromRow: number;
  /** Share of the detail analysis in a row: 1 up to fadeFromRow, falling to 0 at rows. */
  weightOfRow(row: number): number;
  /** Fed with the decimated stream. */
  collector: FrameCollector;
  /** Accumulator of the channel-average rows, then one per channel when asked. */
  overall: SpectrogramAccumulator;
  perChannel: SpectrogramAccumulator[] | null;
}

/** Null when the detail would add nothing: a linear axis, no rows low enough, or under 0.35 s of audio. */
export function createLowFrequencyDetail(o: {
  /** The decimated stream's rate and length. */
  sampleRateHz: number;
  totalFrames: number;
  channels: number;
  columns: number;
  layout: RowLayout;
  aggregate: "max" | "mean";
  perChannel: boolean;
  mainBinHz: number;
}): LowFrequencyDetail | null {
  if (o.layout.frequencyScale !== "log") return null;
  let rows = 0;
  while (rows < o.layout.rows && o.layout.edgesHz[rows + 1] <= LOW_DETAIL_TOP_HZ) rows++;
  let fadeFromRow = 0;
  while (fadeFromRow < rows && o.layout.edgesHz[fadeFromRow + 1] <= LOW_DETAIL_FULL_HZ) fadeFromRow++;
  const fadeOctaves = Math.log2(LOW_DETAIL_TOP_HZ / LOW_DETAIL_FULL_HZ);
  const weightOfRow = (row: number): number =>
    row < fadeFromRow ? 1 : Math.max(0, 1 - Math.log2(o.layout.centresHz[row] / LOW_DETAIL_FULL_HZ) / fadeOctaves);
  const decimatedFrames = o.totalFrames;
  if (rows === 0 || decimatedFrames < LOW_DETAIL_FFT_SIZE) return null;
  const binHz = o.sampleRateHz / LOW_DETAIL_FFT_SIZE;
  // Detail bins no finer than the main ones (rates under ≈ 8 kHz with a short main FFT aside) add nothing.
  if (binHz >= o.mainBinHz) return null;

  const schedule = chooseStftSchedule({
    totalFrames: decimatedFrames,
    fftSize: LOW_DETAIL_FFT_SIZE,
    columns: o.columns,
    channels: o.channels,
    hopSize: null,
    fftsPerColumn: LOW_DETAIL_FFTS_PER_COLUMN,
    minFramesPerColumnPerChannel: LOW_DETAIL_MIN_FRAMES_PER_COLUMN,
    // A 0.34 s frame spans many columns of a short file: 75 % overlap smooths its steps, more adds nothing.
    maxOverlapDivisor: 4,
  });
  const accumulator = (): SpectrogramAccumulator =>
    createSpectrogramAccumulator({
      columns: o.columns,
      layout: o.layout,
      rowFrom: 0,
      rowTo: rows,
      aggregate: o.aggregate,
      binHz,
      binCount: LOW_DETAIL_FFT_SIZE / 2 + 1,
      powerScale: o.mainBinHz / binHz,
      schedule,
      totalFrames: decimatedFrames,
    });
  const overall = accumulator();
  const perChannel = o.perChannel ? Array.from({ length: o.channels }, accumulator) : null;

  const analyzer = createSpectrumAnalyzer(LOW_DETAIL_FFT_SIZE);
  const spectrum = new Float64Array(analyzer.binCount);
  const mean = new Float64Array(analyzer.binCount);
  const share = 1 / o.channels;
  const collector: FrameCollector = createFrameCollector({
    channels: o.channels,
    schedule,
    onFrame(frames, frameIndex) {
      mean.fill(0);
      for (let c = 0; c < frames.length; c++) {
        analyzer.amplitudeSquared(frames[c], spectrum);
        for (let k = 0; k < spectrum.length; k++) mean[k] += spectrum[k] * share;
        perChannel?.[c].addFrame(spectrum, frameIndex);
      }
      overall.addFrame(mean, frameIndex);
    },
  });
  return { rows, fadeFromRow, weightOfRow, collector, overall, perChannel };
}
