/**
 * One streaming pass over a file feeds both analysers (levels/loudness and spectral) and the landmark
 * fingerprint (duplicate transfers, issue #11); finish() merges
 * their results into the report's FileMetrics (in the contract's field order) and one sorted finding list.
 * With a clock (shared/ has no timer of its own), the time each analyser took is measured per block.
 *
 * The pass has two independent sides: the level side (level analyser, close-up capture, loudness curve)
 * and the spectral side (spectral analyser and fingerprint, spectralSide.ts). createFileAnalysis runs both
 * in one thread; a shell with a spare core may run the spectral side elsewhere on the same blocks and
 * merge the two results with mergeFileAnalysis, which gives the same result to the bit.
 */
import { createLevelAnalyser, type LevelAnalyserHooks } from "../analysis/levelAnalyser.ts";
import { createCloseupCapture, type CapturedSegment, type CloseupCapture } from "../closeups/closeupCapture.ts";
import { createLoudnessCurveAccumulator, type LoudnessCurve, type LoudnessCurveAccumulator } from "../closeups/loudnessCurve.ts";
import { compareFindings } from "../profiles/judge.ts";
import { createSpectralSide, type SpectralSideResult } from "./spectralSide.ts";
import type { AudioBlock, BlockAnalyser, LevelAnalysisResult, SpectrogramGrid, StreamFormat, WaveformEnvelope } from "../types/analysis.ts";
import type { FileMetrics, Finding, FindingCode, Severity } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";

export interface FileAnalysisResult {
  metrics: FileMetrics;
  findings: Finding[];
  /** Null when `images: false` was asked for, as `waveform`. */
  spectrogram: SpectrogramGrid | null;
  channelSpectrograms: SpectrogramGrid[] | null;
  waveform: WaveformEnvelope | null;
  /** Encoded fingerprint for the report; null when the rate is outside what the fingerprinter takes. */
  fingerprint: string | null;
  /** Samples kept around candidate events for close-ups (issue #16); null with close-ups off. */
  closeupSegments: CapturedSegment[] | null;
  /** The whole file's loudness curve; null with close-ups off. */
  loudnessCurve: LoudnessCurve | null;
  /** Time in each analyser, push and finish, in the clock's unit (0 without a clock); `closeups` is the capture and the curve. */
  timings: { level: number; spectral: number; fingerprint: number; closeups: number };
}

export interface FileAnalysisOptions {
  /** Monotonic time, e.g. () => performance.now(); read four times a block, off the per-sample loops. */
  clock?: () => number;
  /** Compute the fingerprint (default true): `tidemark scan --no-fingerprint` skips it. */
  fingerprint?: boolean;
  /**
   * Keep samples for close-ups and build the loudness curve (issue #16); absent or null = off
   * (`--no-closeups`). `rankOf` ranks a candidate by the severity the profile will give its code (0 = off).
   */
  closeups?: { rankOf(code: FindingCode, severity: Severity): number } | null;
  /** Build the spectrogram grid and waveform envelope the images are drawn from (default true). */
  images?: boolean;
}

/** What the images are drawn from; throws when the analysis was run with `images: false`. */
export function imagesOf(r: FileAnalysisResult): { spectrogram: SpectrogramGrid; channelSpectrograms: SpectrogramGrid[] | null; waveform: WaveformEnvelope } {
  if (r.spectrogram === null || r.waveform === null) throw new Error("expected the spectrogram grid and waveform envelope, but the analysis ran with images: false");
  return { spectrogram: r.spectrogram, channelSpectrograms: r.channelSpectrograms, waveform: r.waveform };
}

/** What the level side of the pass hands to mergeFileAnalysis. */
export interface LevelSideResult {
  level: LevelAnalysisResult;
  closeupSegments: CapturedSegment[] | null;
  loudnessCurve: LoudnessCurve | null;
  /** In the clock's unit (0 without a clock). */
  timings: { level: number; closeups: number };
}

export type LevelSideOptions = Omit<FileAnalysisOptions, "fingerprint" | "images">;

/** The level analyser with the close-up capture and the loudness curve its hooks feed. */
export function createLevelSide(format: StreamFormat, settings: AnalysisSettings, options: LevelSideOptions = {}): BlockAnalyser<LevelSideResult> {
  let capture: CloseupCapture | null = null;
  let curve: LoudnessCurveAccumulator | null = null;
  const hooks: LevelAnalyserHooks = {};
  const closeups = options.closeups;
  if (closeups) {
    const rate = format.sampleRateHz;
    capture = createCloseupCapture({
      sampleRateHz: rate,
      channels: format.channels,
      settings: settings.closeups,
      silenceMinSeconds: settings.silenceMinSeconds,
      peakTrigger: { amplitude: 10 ** (settings.nearClipDbfs / 20), rank: closeups.rankOf("near-clip", "warn") },
    });
    curve = createLoudnessCurveAccumulator(format);
    const c = capture;
    const silenceRank = Math.max(closeups.rankOf("silent-gap", "warn"), closeups.rankOf("lead-silence", "info"), closeups.rankOf("tail-silence", "info"));
    hooks.onLoudnessHop = curve.onHop;
    hooks.onFinding = (f) => {
      if (f.startSeconds !== null) c.candidate(f.startSeconds * rate, (f.endSeconds ?? f.startSeconds) * rate, closeups.rankOf(f.code, f.severity));
    };
    hooks.onSilentRun = (start, end) => c.candidate(start, end, silenceRank);
    // Detectors that judge at the end (dropouts against the file's noise floor, clicks) name their events early.
    const dropoutRank = closeups.rankOf("dropout", "fail");
    const clickRank = closeups.rankOf("click", "warn");
    hooks.onCandidate = (code, start, end) => c.candidate(start, end, code === "dropout" ? dropoutRank : clickRank);
    const k = curve;
    hooks.onLevelWindow = (w) => {
      for (let ch = 0; ch < w.peakAbs.length; ch++) {
        k.peak(ch, w.peakAbs[ch], w.peakFrame[ch]);
        c.peak(ch, w.peakAbs[ch], w.peakFrame[ch]);
      }
    };
  }
  const level = createLevelAnalyser(format, settings, hooks);
  const clock = options.clock;
  const timings = { level: 0, closeups: 0 };
  return {
    push(block: AudioBlock): void {
      // Before the level analyser: the candidates it raises are cut from the ring, which must hold this block.
      if (capture) {
        const tc = clock?.() ?? 0;
        capture.push(block);
        if (clock) timings.closeups += clock() - tc;
      }
      if (!clock) {
        level.push(block);
        return;
      }
      const t0 = clock();
      level.push(block);
      timings.level += clock() - t0;
    },
    finish(): LevelSideResult {
      const t0 = clock?.() ?? 0;
      const l = level.finish();
      const t1 = clock?.() ?? 0;
      const closeupSegments = capture?.finish() ?? null;
      const loudnessCurve = curve?.finish() ?? null;
      if (clock) {
        timings.level += t1 - t0;
        if (capture) timings.closeups += clock() - t1;
      }
      return { level: l, closeupSegments, loudnessCurve, timings };
    },
  };
}

/** Both sides in this thread: every block goes to each, in the order the single pass always used. */
export function createFileAnalysis(format: StreamFormat, settings: AnalysisSettings, options: FileAnalysisOptions = {}): BlockAnalyser<FileAnalysisResult> {
  const levelSide = createLevelSide(format, settings, options);
  const spectralSide = createSpectralSide(format, settings, options);
  return {
    push(block: AudioBlock): void {
      levelSide.push(block);
      spectralSide.push(block);
    },
    finish(): FileAnalysisResult {
      const l = levelSide.finish();
      return mergeFileAnalysis(l, spectralSide.finish());
    },
  };
}

/** The report's metrics in the contract's field order and one sorted finding list, from the two sides. */
export function mergeFileAnalysis(levelSide: LevelSideResult, spectralSide: SpectralSideResult): FileAnalysisResult {
  const m = levelSide.level.metrics;
  const s = spectralSide.spectral;
  const metrics: FileMetrics = {
    samplePeakDbfs: m.samplePeakDbfs,
    truePeakDbtp: m.truePeakDbtp,
    rmsDbfs: m.rmsDbfs,
    integratedLufs: m.integratedLufs,
    loudnessRangeLu: m.loudnessRangeLu,
    maxMomentaryLufs: m.maxMomentaryLufs,
    maxShortTermLufs: m.maxShortTermLufs,
    clippedSamples: m.clippedSamples,
    clipEvents: m.clipEvents,
    dcOffsetPercent: m.dcOffsetPercent,
    bandwidthHz: s.metrics.bandwidthHz,
    dominantFrequencyHz: s.metrics.dominantFrequencyHz,
    noiseFloorDbfs: m.noiseFloorDbfs,
    stereoCorrelation: m.stereoCorrelation,
    effectiveBitDepth: m.effectiveBitDepth,
    bands: s.metrics.bands,
    channels: m.channels,
  };
  const findings = [...levelSide.level.findings, ...s.findings].sort(compareFindings);
  return {
    metrics,
    findings,
    spectrogram: s.spectrogram,
    channelSpectrograms: s.channelSpectrograms,
    waveform: s.waveform,
    fingerprint: spectralSide.fingerprint,
    closeupSegments: levelSide.closeupSegments,
    loudnessCurve: levelSide.loudnessCurve,
    timings: { level: levelSide.timings.level, spectral: spectralSide.timings.spectral, fingerprint: spectralSide.timings.fingerprint, closeups: levelSide.timings.closeups },
  };
}
