/**
 * The spectral side of the single pass (fileAnalysis.ts): the spectral analyser (spectrogram, waveform
 * strip, bands, bandwidth, hum) and the landmark fingerprint. It shares no state with the level side,
 * so a shell may run it in another thread on copies of the same blocks (cli/src/scan/spectralThread.ts);
 * its result is plain data (typed arrays, numbers, strings) that survives a structured clone unchanged.
 */
import { encodeFingerprint } from "../fingerprint/codec.ts";
import { canFingerprint, createFingerprinter } from "../fingerprint/fingerprinter.ts";
import { createSpectralAnalyser } from "../spectral/spectralAnalyser.ts";
import type { AudioBlock, BlockAnalyser, SpectralAnalysisResult, SpectralMeasuresResult, StreamFormat } from "../types/analysis.ts";
import type { AnalysisSettings } from "../types/settings.ts";

export interface SpectralSideResult {
  /** Without images (`images: false`), its grids and envelope are null. */
  spectral: SpectralAnalysisResult | SpectralMeasuresResult;
  /** Encoded fingerprint; null when turned off or the rate is outside what the fingerprinter takes. */
  fingerprint: string | null;
  /** In the clock's unit (0 without a clock). */
  timings: { spectral: number; fingerprint: number };
}

export interface SpectralSideOptions {
  /** Monotonic time, read a few times a block. */
  clock?: () => number;
  /** Compute the fingerprint (default true). */
  fingerprint?: boolean;
  /** Build the spectrogram grid and waveform envelope (default true; see SpectralAnalyserOptions). */
  images?: boolean;
}

export function createSpectralSide(format: StreamFormat, settings: AnalysisSettings, options: SpectralSideOptions = {}): BlockAnalyser<SpectralSideResult> {
  const spectral = createSpectralAnalyser(format, settings, { images: options.images });
  const fingerprinter = options.fingerprint !== false && canFingerprint(format) ? createFingerprinter(format) : null;
  const clock = options.clock;
  const timings = { spectral: 0, fingerprint: 0 };
  return {
    push(block: AudioBlock): void {
      if (!clock) {
        spectral.push(block);
        fingerprinter?.push(block);
        return;
      }
      const t0 = clock();
      spectral.push(block);
      const t1 = clock();
      // Timed apart from the spectral analyser: the benchmark reports where each issue's cost lies.
      fingerprinter?.push(block);
      timings.spectral += t1 - t0;
      timings.fingerprint += clock() - t1;
    },
    finish(): SpectralSideResult {
      const t0 = clock?.() ?? 0;
      const s = spectral.finish();
      const t1 = clock?.() ?? 0;
      const fingerprint = fingerprinter ? encodeFingerprint(fingerprinter.finish()) : null;
      if (clock) {
        timings.spectral += t1 - t0;
        timings.fingerprint += clock() - t1;
      }
      return { spectral: s, fingerprint, timings };
    },
  };
}
