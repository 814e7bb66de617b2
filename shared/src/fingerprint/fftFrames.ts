/**
 * Band power spectrum of one frame, on top of the shared FFT adapter (shared/src/spectral/fft.ts,
 * the only importer of fft.js). Raw power |X[k]|² of the Hann-windowed frame, not dBFS: the
 * fingerprint only compares values with each other, and its floor is set in these units. Powers,
 * not decibels: the ranking is the same (log is monotonic) and 10⁷ logarithms an hour are saved.
 */
import { createSpectrumAnalyzer } from "../spectral/fft.ts";

export interface FramePowerSpectrum {
  readonly fftSize: number;
  /**
   * Adds |X[k]|² for bins k in [firstBin, firstBin + sum.length) of the Hann-windowed `frame`
   * (its first fftSize samples) to `sum`, so several channels' powers can be summed. Allocates nothing.
   */
  addPower(frame: Float32Array, firstBin: number, sum: Float64Array): void;
  /** The same for two frames at once, `|A[k]|² + |B[k]|²`, through one complex transform. */
  addPairPower(a: Float32Array, b: Float32Array, firstBin: number, sum: Float64Array): void;
}

export function createFramePowerSpectrum(fftSize: number): FramePowerSpectrum {
  const analyzer = createSpectrumAnalyzer(fftSize);
  const spectrum = new Float64Array(2 * fftSize);
  const halfBins = analyzer.binCount;

  function checkBand(firstBin: number, sum: Float64Array): void {
    // Bin 0 has no mirror image in the pair formula, so a pair band starts at bin 1 at the lowest.
    if (firstBin < 1 || firstBin + sum.length > halfBins - 1) {
      throw new RangeError(`bins [${firstBin}, ${firstBin + sum.length}) outside [1, ${halfBins - 1})`);
    }
  }

  return {
    fftSize,
    addPower(frame, firstBin, sum) {
      checkBand(firstBin, sum);
      // Interleaved [re, im] for bins 0 … N/2; only the band's bins are read.
      analyzer.spectrum(frame, spectrum);
      for (let k = 0; k < sum.length; k++) {
        const re = spectrum[2 * (firstBin + k)];
        const im = spectrum[2 * (firstBin + k) + 1];
        sum[k] += re * re + im * im;
      }
    },
    addPairPower(a, b, firstBin, sum) {
      checkBand(firstBin, sum);
      analyzer.pairSpectrum(a, b, spectrum);
      for (let k = 0; k < sum.length; k++) {
        const j = firstBin + k;
        const m = fftSize - j;
        const re = spectrum[2 * j];
        const im = spectrum[2 * j + 1];
        const reM = spectrum[2 * m];
        const imM = spectrum[2 * m + 1];
        sum[k] += 0.5 * (re * re + im * im + reM * reM + imM * imM);
      }
    },
  };
}
