/**
 * The spectral half of the single pass over a file (the level half is shared/src/analysis): STFT
 * frames feed the spectrogram grid and the Welch spectrum (bands, bandwidth, dominant frequency); the
 * audio decimated to ≈ 6 kHz feeds the fine low rows of the grid and a fine spectrum (hum, low bands);
 * every sample feeds the waveform strip.
 */
import type { AudioBlock, BlockAnalyser, SpectralAnalysisResult, SpectralMeasuresResult, SpectrogramGrid, StreamFormat } from "../types/analysis.ts";
import type { BandLevel, Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { spectrogramPlotArea } from "../render/layout.ts";
import { bandLevelsDb, createBandWeights, fractionalOctaveBands, type BandWeights } from "./bands.ts";
import { estimateBandwidth, judgeBandwidth, type BandwidthEstimate } from "./bandwidth.ts";
import { dominantFrequencyHz } from "./dominantFrequency.ts";
import { createSpectrumAnalyzer, isPowerOfTwo, type SpectrumAnalyzer } from "./fft.ts";
import { createFrameCollector, type FrameCollector } from "./frameCollector.ts";
import { createLowRateStream, lowRateFactor } from "./lowRateStream.ts";
import { createSpectrumKernels } from "./spectrumKernels.ts";
import { detectHum, type HumEstimate } from "./hum.ts";
import {
  createWelchAccumulator,
  isSilentSpectrum,
  meanSquarePerBin,
  type LongTermSpectrum,
  type WelchAccumulator,
} from "./longTermSpectrum.ts";
import { createLowFrequencyDetail } from "./lowFrequencyDetail.ts";
import {
  assembleGrid,
  createSpectrogramAccumulator,
  spectrogramRowLayout,
  type RowLayout,
  type SpectrogramAccumulator,
} from "./spectrogramGrid.ts";
import { chooseLongFrameSchedule, chooseStftSchedule, defaultFftSize, type FrameSchedule } from "./stftSchedule.ts";
import { createWaveformAccumulator } from "./waveformEnvelope.ts";

/** Rates the analysis is laid out for (issue #4 asks for 8 … 384 kHz; a margin either side). */
const MIN_SAMPLE_RATE_HZ = 4000;
const MAX_SAMPLE_RATE_HZ = 768000;
const MAX_CHANNELS = 64;
/** A band narrower than this many STFT bins is read from the fine spectrum when there is one. */
const MIN_BINS_PER_BAND = 4;
/**
 * The decimated stream is clean up to an eighth of its rate (≈ 750 Hz: aliases cut ≥ 50 dB, droop
 * < 0.7 dB; decimator.ts), so the fine spectrum refines only peaks below that.
 */
const FINE_RELIABLE_FRACTION = 1 / 8;

export interface SpectralAnalyserOptions {
  /**
   * Build what the images are drawn from (default true): the spectrogram grid with its low-frequency
   * detail analysis, and the waveform envelope. A scan that draws no image skips them (a third of a 1 s
   * file's spectral work); the metrics and findings come from the Welch and fine spectra alone, so they
   * are the same either way.
   */
  images?: boolean;
}

export function createSpectralAnalyser(format: StreamFormat, settings: AnalysisSettings, options?: { images?: true }): BlockAnalyser<SpectralAnalysisResult>;
export function createSpectralAnalyser(format: StreamFormat, settings: AnalysisSettings, options: SpectralAnalyserOptions): BlockAnalyser<SpectralAnalysisResult | SpectralMeasuresResult>;
export function createSpectralAnalyser(format: StreamFormat, settings: AnalysisSettings, options: SpectralAnalyserOptions = {}): BlockAnalyser<SpectralAnalysisResult | SpectralMeasuresResult> {
  checkFormat(format);
  const images = options.images !== false;
  const { sampleRateHz, channels, totalFrames } = format;
  const fftSize = fftSizeFor(settings.fftSize ?? defaultFftSize(sampleRateHz), totalFrames);
  const analyzer = createSpectrumAnalyzer(fftSize);
  const plot = spectrogramPlotArea(settings.spectrogram.width, settings.spectrogram.height);
  const schedule = chooseStftSchedule({
    totalFrames,
    fftSize,
    columns: plot.width,
    channels,
    hopSize: settings.hopSize,
  });

  const spectrogramSettings = settings.spectrogram;
  // The grid's rows only matter to the images (and plotArea already holds their count to its minimum).
  const layout = images ? spectrogramRowLayout(plot.height, spectrogramSettings.frequencyScale, sampleRateHz, fftSize) : null;
  const lowFactor = lowRateFactor(sampleRateHz);
  const lowRate = { factor: lowFactor, sampleRateHz: sampleRateHz / lowFactor, totalFrames: Math.floor(totalFrames / lowFactor) };
  const lowDetail = layout === null
    ? null
    : createLowFrequencyDetail({
        sampleRateHz: lowRate.sampleRateHz,
        totalFrames: lowRate.totalFrames,
        channels,
        columns: plot.width,
        layout,
        aggregate: spectrogramSettings.aggregate,
        perChannel: spectrogramSettings.perChannel,
        mainBinHz: sampleRateHz / fftSize,
      });
  const mainGrid = (layout: RowLayout): SpectrogramAccumulator =>
    createSpectrogramAccumulator({
      columns: plot.width,
      layout,
      rowFrom: lowDetail?.fadeFromRow ?? 0,
      rowTo: layout.rows,
      aggregate: spectrogramSettings.aggregate,
      binHz: sampleRateHz / fftSize,
      binCount: analyzer.binCount,
      powerScale: 1,
      schedule,
      totalFrames,
    });
  const grid = layout ? mainGrid(layout) : null;
  const withDetail = (main: SpectrogramAccumulator, detail: SpectrogramAccumulator | undefined) =>
    detail && lowDetail ? [{ accumulator: main }, { accumulator: detail, weightOfRow: lowDetail.weightOfRow }] : [{ accumulator: main }];
  const channelGrids = layout && spectrogramSettings.perChannel ? Array.from({ length: channels }, () => mainGrid(layout)) : null;
  const perChannelShare = 1 / channels;
  const powerSums = grid === null && channelGrids === null ? analyzer.powerSums(channels) : null;
  // With images each frame's spectrum is kept: it is added to its channel's Welch sum and the channel mean in
  // spectrumKernels.wat's `accumulate` (the same doubles as the JavaScript below; issue #22: a short file's
  // frames run that loop unoptimised), all three in the kernel's memory.
  const binBytes = 8 * analyzer.binCount;
  const sumKernels = powerSums === null ? createSpectrumKernels((2 + channels) * binBytes) : null;
  const inKernel = (at: number): Float64Array => new Float64Array(sumKernels!.memory.buffer, at, analyzer.binCount);
  const channelSpectrum = sumKernels ? inKernel(0) : new Float64Array(analyzer.binCount);
  const meanSpectrum = sumKernels ? inKernel(binBytes) : new Float64Array(analyzer.binCount);
  const welch = createWelchAccumulator({
    channels,
    fftSize,
    sampleRateHz,
    noiseBandwidthBins: analyzer.noiseBandwidthBins,
    sums: sumKernels ? Array.from({ length: channels }, (_, c) => inKernel((2 + c) * binBytes)) : undefined,
  });

  const stft = createFrameCollector({
    channels,
    schedule,
    onFrame(frames, frameIndex, validSamples, paddingBefore) {
      const gain = validSamples === fftSize ? 1 : partialFrameGain(analyzer, paddingBefore, validSamples);
      if (gain === 1 && powerSums !== null) {
        // No image to feed (a scan without --spectrograms; 360 frames of a 1 s stereo file): each channel's
        // spectrum goes straight into its sums, the same doubles without the spectrum or channel mean; they
        // join the (then empty) Welch sums at the end.
        for (let c = 0; c < channels; c++) powerSums.add(c, frames[c]);
        welch.endFrame();
        return;
      }
      meanSpectrum.fill(0);
      for (let c = 0; c < channels; c++) {
        analyzer.amplitudeSquared(frames[c], channelSpectrum);
        if (gain !== 1) for (let k = 0; k < channelSpectrum.length; k++) channelSpectrum[k] *= gain;
        if (sumKernels) sumKernels.accumulate(0, (2 + c) * binBytes, binBytes, analyzer.binCount, perChannelShare);
        else {
          welch.add(c, channelSpectrum);
          for (let k = 0; k < channelSpectrum.length; k++) meanSpectrum[k] += channelSpectrum[k] * perChannelShare;
        }
        channelGrids?.[c].addFrame(channelSpectrum, frameIndex);
      }
      welch.endFrame();
      grid?.addFrame(meanSpectrum, frameIndex);
    },
  });

  const fine = createFineSpectrum(channels, lowRate.sampleRateHz, lowRate.totalFrames);
  const lowRateConsumers = [lowDetail?.collector, fine?.collector].filter((c): c is FrameCollector => c !== undefined);
  const lowRateStream = lowRateConsumers.length > 0 ? createLowRateStream({ channels, factor: lowRate.factor, consumers: lowRateConsumers }) : null;
  const waveform = images ? createWaveformAccumulator({ columns: plot.width, totalFrames, sampleRateHz }) : null;

  return {
    push(block) {
      checkBlock(block, channels);
      stft.push(block);
      lowRateStream?.push(block);
      waveform?.push(block);
    },
    finish() {
      stft.flushShortFile();
      if (powerSums !== null) for (let c = 0; c < channels; c++) powerSums.addTo(c, welch.sumOf(c));
      const durationSeconds = totalFrames / sampleRateHz;
      const overall = welch.overall();
      const perChannel = welch.perChannel();
      const fineOverall = fine ? fine.welch.overall() : null;
      const finePerChannel = fine ? fine.welch.perChannel() : null;
      // Under SHORTEST_FFT_SIZE samples (1.3 ms at 48 kHz) a file has no spectrum worth the name: a few
      // samples zero-padded read as a flat, full-band spectrum. Its spectral summaries stay empty.
      const tooShort = totalFrames < SHORTEST_FFT_SIZE;
      const isSilent = tooShort || isSilentSpectrum(overall);
      const bandwidth = isSilent ? null : estimateBandwidth(overall, settings.bandwidthThresholdDb);
      const findings: Finding[] = tooShort
        ? []
        : [
            ...bandwidthFindings(bandwidth, perChannel, settings.bandwidthThresholdDb, sampleRateHz),
            ...humFindings(fineOverall, finePerChannel, settings.humProminenceDb),
          ];
      const bands = (bandsPerOctave: 1 | 3): BandLevel[] =>
        tooShort ? bandLevels(bandsPerOctave, overall, null).map((b) => ({ ...b, db: null })) : bandLevels(bandsPerOctave, overall, fineOverall);
      const measures = {
        metrics: {
          bands: {
            octave: bands(1),
            third: bands(3),
          },
          bandwidthHz: bandwidth === null ? null : Math.round(bandwidth.bandwidthHz),
          dominantFrequencyHz: isSilent ? null : roundTo(dominantFrequencyHz(overall, fineOverall, FINE_RELIABLE_FRACTION * lowRate.sampleRateHz), 100),
        },
        findings,
      };
      if (grid === null || waveform === null || layout === null) return { ...measures, spectrogram: null, channelSpectrograms: null, waveform: null };
      return {
        ...measures,
        spectrogram: assembleGrid(withDetail(grid, lowDetail?.overall), plot.width, layout, durationSeconds, sampleRateHz),
        channelSpectrograms: channelGrids
          ? channelGrids.map(
              (g, c): SpectrogramGrid =>
                assembleGrid(withDetail(g, lowDetail?.perChannel?.[c]), plot.width, layout, durationSeconds, sampleRateHz),
            )
          : null,
        waveform: waveform.finish(),
      };
    },
  };
}

/**
 * A file shorter than the FFT gets the largest power of two it fills, so its one frame is a whole,
 * properly windowed frame; only files under SHORTEST_FFT_SIZE samples are zero-padded.
 */
const SHORTEST_FFT_SIZE = 64;

function fftSizeFor(requested: number, totalFrames: number): number {
  if (!isPowerOfTwo(requested)) throw new Error(`fftSize must be a power of two > 1, got ${requested}`);
  if (totalFrames >= requested) return requested;
  return Math.max(Math.min(requested, SHORTEST_FFT_SIZE), 2 ** Math.floor(Math.log2(Math.max(1, totalFrames))));
}

/**
 * The fine spectrum: long frames (≈ 1.5 Hz bins) of the decimated stream, spread over the file; none
 * for files under ≈ 0.7 s.
 */
function createFineSpectrum(
  channels: number,
  sampleRateHz: number,
  totalFrames: number,
): { collector: FrameCollector; welch: WelchAccumulator } | null {
  const schedule: FrameSchedule | null = chooseLongFrameSchedule(totalFrames, sampleRateHz);
  if (schedule === null) return null;
  // In double precision (fft.js): hum is judged far below the signal, where a single-precision transform's
  // rounding stood 18 dB over a clean 24-bit tone's floor and read as hum (tests/shared/hum.test.ts). These
  // few long frames of the decimated stream cost little either way.
  const analyzer = createSpectrumAnalyzer(schedule.frameSize, { engine: "fft.js" });
  const spectrum = new Float64Array(analyzer.binCount);
  const welch = createWelchAccumulator({ channels, fftSize: schedule.frameSize, sampleRateHz, noiseBandwidthBins: analyzer.noiseBandwidthBins });
  const collector = createFrameCollector({
    channels,
    schedule,
    onFrame(frames) {
      for (let c = 0; c < frames.length; c++) {
        analyzer.amplitudeSquared(frames[c], spectrum);
        welch.add(c, spectrum);
      }
      welch.endFrame();
    },
  });
  return { collector, welch };
}

/**
 * Gain that restores a tone's amplitude in a zero-padded frame: (Σw)² over the samples present
 * instead of the whole window (coherent gain; noise reads a little high, tones read true).
 */
function partialFrameGain(analyzer: SpectrumAnalyzer, from: number, count: number): number {
  let used = 0;
  for (let n = from; n < from + count; n++) used += analyzer.window[n];
  return used > 0 ? (analyzer.windowSum / used) ** 2 : 1;
}

const weightsCache = new Map<string, BandWeights>();

/** Weights of the file's band list (its rate decides which bands exist) over spectrum s's bins. */
function weightsFor(bandsPerOctave: 1 | 3, fileRateHz: number, s: LongTermSpectrum): BandWeights {
  const key = `${bandsPerOctave}:${fileRateHz}:${s.sampleRateHz}:${s.fftSize}`;
  let w = weightsCache.get(key);
  if (w === undefined) {
    w = createBandWeights(fractionalOctaveBands(bandsPerOctave, fileRateHz), s.binHz, s.binCount);
    weightsCache.set(key, w);
  }
  return w;
}

/** Band levels (dB re full scale, 0.01 dB) from the STFT spectrum, narrow low bands from the fine one. */
function bandLevels(bandsPerOctave: 1 | 3, coarse: LongTermSpectrum, fine: LongTermSpectrum | null): BandLevel[] {
  const coarseWeights = weightsFor(bandsPerOctave, coarse.sampleRateHz, coarse);
  const coarseDb = new Float64Array(coarseWeights.bands.length);
  bandLevelsDb(meanSquarePerBin(coarse), coarseWeights, coarseDb);
  let fineDb: Float64Array | null = null;
  if (fine !== null && fine.frames > 0) {
    fineDb = new Float64Array(coarseWeights.bands.length);
    bandLevelsDb(meanSquarePerBin(fine), weightsFor(bandsPerOctave, coarse.sampleRateHz, fine), fineDb);
  }
  return coarseWeights.bands.map((band, i) => {
    const isNarrow = band.upperHz - band.lowerHz < MIN_BINS_PER_BAND * coarse.binHz;
    const db = fineDb !== null && isNarrow ? fineDb[i] : coarseDb[i];
    return { centerHz: band.centerHz, db: Number.isFinite(db) ? roundTo(db, 100) : null };
  });
}

/**
 * Judged on the channel average (its estimate, already made for the metric: null when silent); a channel
 * that alone shows a shelf is reported on its own.
 */
function bandwidthFindings(
  overall: BandwidthEstimate | null,
  perChannel: LongTermSpectrum[],
  thresholdDb: number,
  sampleRateHz: number,
): Finding[] {
  const judge = (estimate: BandwidthEstimate | null, channel: number | null): Finding | null => {
    if (estimate === null) return null;
    const verdict = judgeBandwidth(estimate, sampleRateHz);
    if (verdict === null) return null;
    return wholeFileFinding(verdict.code, channel, bandwidthMessage(estimate, verdict, sampleRateHz));
  };
  const whole = judge(overall, null);
  if (whole !== null || perChannel.length === 1) return whole ? [whole] : [];
  return perChannel.map((s, c) => judge(estimateBandwidth(s, thresholdDb), c)).filter((f): f is Finding => f !== null);
}

function humFindings(overall: LongTermSpectrum | null, perChannel: LongTermSpectrum[] | null, prominenceDb: number): Finding[] {
  if (overall === null || perChannel === null) return [];
  const judge = (s: LongTermSpectrum, channel: number | null): Finding | null => {
    const hum = detectHum(s, prominenceDb);
    return hum === null ? null : wholeFileFinding("hum", channel, humMessage(hum, prominenceDb));
  };
  const whole = judge(overall, null);
  if (whole !== null || perChannel.length === 1) return whole ? [whole] : [];
  return perChannel.map((s, c) => judge(s, c)).filter((f): f is Finding => f !== null);
}

function wholeFileFinding(code: Finding["code"], channel: number | null, message: string): Finding {
  // Default severity; the CLI's profiles re-judge it.
  return { code, severity: "warn", channel, startSeconds: null, endSeconds: null, message };
}

function bandwidthMessage(
  e: BandwidthEstimate,
  verdict: NonNullable<ReturnType<typeof judgeBandwidth>>,
  sampleRateHz: number,
): string {
  const depth = `${Math.round(e.shelfDepthDb)} dB`;
  if (verdict.code === "upsampled") {
    return (
      `Content stops at ${formatKhz(e.bandwidthHz)} (a ${depth} shelf), the Nyquist frequency of ` +
      `${formatKhz(verdict.fromSampleRateHz)}: probably upsampled from ${formatKhz(verdict.fromSampleRateHz)} to ${formatKhz(sampleRateHz)}`
    );
  }
  return (
    `Energy stops at ${formatKhz(e.bandwidthHz)} (a ${depth} shelf within 1/6 octave), below the ` +
    `${formatKhz(sampleRateHz / 2)} Nyquist frequency: lossy origin suspected`
  );
}

function humMessage(hum: HumEstimate, prominenceDb: number): string {
  const count = hum.prominentHarmonics.length;
  const highest = hum.prominentHarmonics[count - 1].harmonic * hum.mainsHz;
  const harmonics = count === 1 ? "1 harmonic (the fundamental)" : `${count} harmonics up to ${highest} Hz`;
  return (
    `Mains hum at ${hum.mainsHz} Hz (measured ${hum.fundamentalHz.toFixed(2)} Hz): ${harmonics} stand at least ` +
    `${prominenceDb} dB above the local floor; the fundamental by ${hum.fundamentalProminenceDb.toFixed(1)} dB`
  );
}

/** 16000 → "16 kHz", 22050 → "22.05 kHz". */
function formatKhz(hz: number): string {
  return `${Number((hz / 1000).toFixed(2))} kHz`;
}

function roundTo(x: number | null, perUnit: number): number | null {
  return x === null ? null : Math.round(x * perUnit) / perUnit;
}

function checkFormat(f: StreamFormat): void {
  if (!Number.isFinite(f.sampleRateHz) || f.sampleRateHz < MIN_SAMPLE_RATE_HZ || f.sampleRateHz > MAX_SAMPLE_RATE_HZ) {
    throw new Error(`sampleRateHz must be between ${MIN_SAMPLE_RATE_HZ} and ${MAX_SAMPLE_RATE_HZ} Hz, got ${f.sampleRateHz}`);
  }
  if (!Number.isInteger(f.channels) || f.channels < 1 || f.channels > MAX_CHANNELS) {
    throw new Error(`channels must be an integer from 1 to ${MAX_CHANNELS}, got ${f.channels}`);
  }
  if (!Number.isInteger(f.totalFrames) || f.totalFrames < 0) {
    throw new Error(`totalFrames must be a non-negative integer, got ${f.totalFrames}`);
  }
}

function checkBlock(block: AudioBlock, channels: number): void {
  if (block.channels.length !== channels) {
    throw new Error(`block must carry ${channels} channel arrays (the stream's format), got ${block.channels.length}`);
  }
  for (const samples of block.channels) {
    if (samples.length < block.frames) {
      throw new Error(`block channel arrays must hold block.frames = ${block.frames} samples, got ${samples.length}`);
    }
  }
}
