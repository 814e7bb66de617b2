/**
 * The fingerprinter's only contact with fft.js: a Hann-windowed power spectrum in dB of one frame.
 * Kept in one adapter (fft.js is CommonJS with `any` typings) so it can later be merged into
 * shared/src/spectral/fft.ts, which was not in the tree when this was written.
 */
import FFT from "fft.js";

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
  if (!Number.isInteger(fftSize) || fftSize < 4 || (fftSize & (fftSize - 1)) !== 0) {
    throw new RangeError(`fftSize must be a power of two ≥ 4, got ${fftSize}`);
  }
  const fft = new FFT(fftSize);
  const window = new Float64Array(fftSize);
  // Periodic Hann (common practice for short-time spectra): low sidelobes keep weak peaks visible.
  for (let i = 0; i < fftSize; i++) window[i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / fftSize);
  const windowed = new Float64Array(fftSize);
  const spectrum = new Float64Array(2 * fftSize);
  const halfBins = fftSize / 2 + 1;

  return {
    fftSize,
    powerDb(frame, firstBin, out) {
      if (frame.length < fftSize) throw new RangeError(`frame must hold ${fftSize} samples, got ${frame.length}`);
      if (firstBin < 0 || firstBin + out.length > halfBins) {
        throw new RangeError(`bins [${firstBin}, ${firstBin + out.length}) outside [0, ${halfBins})`);
      }
      for (let i = 0; i < fftSize; i++) windowed[i] = frame[i] * window[i];
      // realTransform fills only bins 0..N/2 (interleaved re, im), which is all we read.
      fft.realTransform(spectrum, windowed);
      for (let k = 0; k < out.length; k++) {
        const re = spectrum[2 * (firstBin + k)];
        const im = spectrum[2 * (firstBin + k) + 1];
        out[k] = 10 * Math.log10(re * re + im * im + TINY_POWER);
      }
    },
  };
}
