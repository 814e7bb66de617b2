/**
 * One streaming pass over a file feeds both analysers (levels/loudness and spectral); finish() merges
 * their results into the report's FileMetrics (in the contract's field order) and one sorted finding list.
 */
import { createLevelAnalyser } from "../analysis/levelAnalyser.ts";
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
}

export function createFileAnalysis(format: StreamFormat, settings: AnalysisSettings): BlockAnalyser<FileAnalysisResult> {
  const level = createLevelAnalyser(format, settings);
  const spectral = createSpectralAnalyser(format, settings);
  return {
    push(block: AudioBlock): void {
      level.push(block);
      spectral.push(block);
    },
    finish(): FileAnalysisResult {
      const l = level.finish();
      const s = spectral.finish();
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
      return { metrics, findings, spectrogram: s.spectrogram, channelSpectrograms: s.channelSpectrograms, waveform: s.waveform };
    },
  };
}
