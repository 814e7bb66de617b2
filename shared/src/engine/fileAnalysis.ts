/**
 * One streaming pass over a file feeds both analysers (levels/loudness and spectral) and the landmark
 * fingerprint (duplicate transfers, issue #11); finish() merges
 * their results into the report's FileMetrics (in the contract's field order) and one sorted finding list.
 * With a clock (shared/ has no timer of its own), the time each analyser took is measured per block.
 */
import { createLevelAnalyser } from "../analysis/levelAnalyser.ts";
import { encodeFingerprint } from "../fingerprint/codec.ts";
import { canFingerprint, createFingerprinter } from "../fingerprint/fingerprinter.ts";
import { compareFindings } from "../profiles/judge.ts";
import { createSpectralAnalyser } from "../spectral/spectralAnalyser.ts";
import type { AudioBlock, BlockAnalyser, SpectrogramGrid, StreamFormat, WaveformEnvelope } from "../types/analysis.ts";
import type { FileMetrics, Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";

export interface FileAnalysisResult {
  metrics: FileMetrics;
  findings: Finding[];
  spectrogram: SpectrogramGrid;
  channelSpectrograms: SpectrogramGrid[] | null;
  waveform: WaveformEnvelope;
  /** Encoded fingerprint for the report; null when the rate is outside what the fingerprinter takes. */
  fingerprint: string | null;
  /** Time in each analyser, push and finish, in the clock's unit (0 without a clock). */
  timings: { level: number; spectral: number; fingerprint: number };
}

export interface FileAnalysisOptions {
  /** Monotonic time, e.g. () => performance.now(); read four times a block, off the per-sample loops. */
  clock?: () => number;
  /** Compute the fingerprint (default true): `tidemark scan --no-fingerprint` skips it. */
  fingerprint?: boolean;
}

export function createFileAnalysis(format: StreamFormat, settings: AnalysisSettings, options: FileAnalysisOptions = {}): BlockAnalyser<FileAnalysisResult> {
  const level = createLevelAnalyser(format, settings);
  const spectral = createSpectralAnalyser(format, settings);
  const fingerprinter = options.fingerprint !== false && canFingerprint(format) ? createFingerprinter(format) : null;
  const clock = options.clock;
  const timings = { level: 0, spectral: 0, fingerprint: 0 };
  return {
    push(block: AudioBlock): void {
      if (!clock) {
        level.push(block);
        spectral.push(block);
        fingerprinter?.push(block);
        return;
      }
      const t0 = clock();
      level.push(block);
      const t1 = clock();
      spectral.push(block);
      const t2 = clock();
      // Timed apart from the spectral analyser: the benchmark reports where each issue's cost lies.
      fingerprinter?.push(block);
      timings.level += t1 - t0;
      timings.spectral += t2 - t1;
      timings.fingerprint += clock() - t2;
    },
    finish(): FileAnalysisResult {
      const t0 = clock?.() ?? 0;
      const l = level.finish();
      const t1 = clock?.() ?? 0;
      const s = spectral.finish();
      const t2 = clock?.() ?? 0;
      const fingerprint = fingerprinter ? encodeFingerprint(fingerprinter.finish()) : null;
      if (clock) {
        timings.level += t1 - t0;
        timings.spectral += t2 - t1;
        timings.fingerprint += clock() - t2;
      }
      const m = l.metrics;
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
      const findings = [...l.findings, ...s.findings].sort(compareFindings);
      return { metrics, findings, spectrogram: s.spectrogram, channelSpectrograms: s.channelSpectrograms, waveform: s.waveform, fingerprint, timings };
    },
  };
}
