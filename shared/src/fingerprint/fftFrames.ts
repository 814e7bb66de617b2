/**
 * Band power spectrum in dB of one frame, on top of the shared FFT adapter (shared/src/spectral/
 * fft.ts, the only importer of fft.js). Raw power 10·log10|X[k]|² of the Hann-windowed frame, not
 * dBFS: the fingerprint only compares values with each other, and its floor is set in these units.
 */
import { createSpectrumAnalyzer } from "../spectral/fft.ts";

export interface FramePowerSpectrum {
  readonly fftSize: number;
  /**
   * Writes 10·log10(|X[k]|² + tiny) for bins k in [firstBin, firstBin + out.length) of the
   * Hann-windowed `frame` (its first fftSize samples) into `out`. Allocates nothing.
   */
  powerDb(frame: Float32Array, firstBin: number, out: Float32Array): void;
}

/** Far below any real signal (−300 dB): keeps log10 finite for digital silence. */
const TINY_POWER = 1e-30;

export function createFramePowerSpectrum(fftSize: number): FramePowerSpectrum {
  const analyzer = createSpectrumAnalyzer(fftSize);
  const spectrum = new Float64Array(2 * fftSize);
  const halfBins = analyzer.binCount;

  return {
    fftSize,
    powerDb(frame, firstBin, out) {
      if (firstBin < 0 || firstBin + out.length > halfBins) {
        throw new RangeError(`bins [${firstBin}, ${firstBin + out.length}) outside [0, ${halfBins})`);
      }
      // Interleaved [re, im] for bins 0 … N/2; only the band's bins are read.
      analyzer.spectrum(frame, spectrum);
      for (let k = 0; k < out.length; k++) {
        const re = spectrum[2 * (firstBin + k)];
        const im = spectrum[2 * (firstBin + k) + 1];
        out[k] = 10 * Math.log10(re * re + im * im + TINY_POWER);
      }
    },
  };
}
