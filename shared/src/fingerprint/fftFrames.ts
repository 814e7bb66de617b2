/**
 * Band power spectrum of one frame, on top of the shared FFT adapter (shared/src/spectral/fft.ts,
 * the only importer of fft.js). Raw power |X[k]|² of the Hann-windowed frame, not dBFS: the
 * fingerprint only compares values with each other, and its floor is set in these units.
 */
import { createSpectrumAnalyzer } from "../spectral/fft.ts";

export interface FramePowerSpectrum {
  readonly fftSize: number;
  /**
   * Adds |X[k]|² for bins k in [firstBin, firstBin + sum.length) of the Hann-windowed `frame`
   * (its first fftSize samples) to `sum`, so several channels' powers can be summed. Allocates nothing.
   */
  addPower(frame: Float32Array, firstBin: number, sum: Float64Array): void;
}

/** Far below any real signal (−300 dB): keeps log10 finite for digital silence. */
const TINY_POWER = 1e-30;

/** Writes 10·log10(scale · power[k] + tiny) into `out`. */
export function powerToDb(power: Float64Array, scale: number, out: Float32Array): void {
  for (let k = 0; k < out.length; k++) out[k] = 10 * Math.log10(scale * power[k] + TINY_POWER);
}

export function createFramePowerSpectrum(fftSize: number): FramePowerSpectrum {
  const analyzer = createSpectrumAnalyzer(fftSize);
  const spectrum = new Float64Array(2 * fftSize);
  const halfBins = analyzer.binCount;

  return {
    fftSize,
    addPower(frame, firstBin, sum) {
      if (firstBin < 0 || firstBin + sum.length > halfBins) {
        throw new RangeError(`bins [${firstBin}, ${firstBin + sum.length}) outside [0, ${halfBins})`);
      }
      // Interleaved [re, im] for bins 0 … N/2; only the band's bins are read.
      analyzer.spectrum(frame, spectrum);
      for (let k = 0; k < sum.length; k++) {
        const re = spectrum[2 * (firstBin + k)];
        const im = spectrum[2 * (firstBin + k) + 1];
        sum[k] += re * re + im * im;
      }
    },
  };
}
