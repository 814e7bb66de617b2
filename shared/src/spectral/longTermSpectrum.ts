/**
 * Welch long-term average spectrum: the mean of windowed periodograms over the frames of a file
 * (Welch 1967), one per channel, plus the channel average. Power is averaged across channels rather than
 * taken from a sum of the channels, so a polarity-inverted pair does not cancel to silence.
 */

export interface LongTermSpectrum {
  sampleRateHz: number;
  fftSize: number;
  binHz: number;
  binCount: number;
  /** Frames averaged (0: no estimate; every value is then 0). */
  frames: number;
  /** Mean window-corrected amplitude² per bin (a sine of amplitude a reads ≈ a² at its peak bin). */
  amplitudeSquared: Float64Array;
  /** Equivalent noise bandwidth of the window in bins (1.5 for Hann). */
  noiseBandwidthBins: number;
}

export interface WelchAccumulator {
  /** Adds channel c's amplitude² spectrum of one frame. */
  add(channel: number, amplitudeSquared: Float64Array | Float32Array): void;
  /**
   * Channel c's running sum, for a caller that adds a frame's spectrum into it directly
   * (SpectrumAnalyzer.addAmplitudeSquared) instead of through `add`.
   */
  sumOf(channel: number): Float64Array;
  /** Counts one frame (call once per frame, after adding every channel). */
  endFrame(): void;
  readonly frames: number;
  perChannel(): LongTermSpectrum[];
  /** The mean over channels of the per-channel spectra. */
  overall(): LongTermSpectrum;
}

export function createWelchAccumulator(o: {
  channels: number;
  fftSize: number;
  sampleRateHz: number;
  noiseBandwidthBins: number;
  /**
   * Zeroed arrays of fftSize/2 + 1 to keep the sums in (a kernel's memory, whose user adds into them
   * directly, as with sumOf); fresh ones when absent.
   */
  sums?: Float64Array[];
}): WelchAccumulator {
  const binCount = o.fftSize / 2 + 1;
  const sums: Float64Array[] = [];
  for (let c = 0; c < o.channels; c++) {
    const given = o.sums?.[c];
    if (given !== undefined && given.length !== binCount) throw new Error(`Welch sums must hold ${binCount} values, got ${given.length}`);
    sums.push(given ?? new Float64Array(binCount));
  }
  let frames = 0;

  const wrap = (amplitudeSquared: Float64Array): LongTermSpectrum => ({
    sampleRateHz: o.sampleRateHz,
    fftSize: o.fftSize,
    binHz: o.sampleRateHz / o.fftSize,
    binCount,
    frames,
    amplitudeSquared,
    noiseBandwidthBins: o.noiseBandwidthBins,
  });

  return {
    add(channel, amplitudeSquared) {
      const sum = sums[channel];
      for (let k = 0; k < binCount; k++) sum[k] += amplitudeSquared[k];
    },
    sumOf(channel) {
      return sums[channel];
    },
    endFrame() {
      frames++;
    },
    get frames() {
      return frames;
    },
    perChannel() {
      return sums.map((sum) => {
        const mean = new Float64Array(binCount);
        if (frames > 0) for (let k = 0; k < binCount; k++) mean[k] = sum[k] / frames;
        return wrap(mean);
      });
    },
    overall() {
      const mean = new Float64Array(binCount);
      if (frames > 0) {
        const scale = 1 / (frames * sums.length);
        for (const sum of sums) for (let k = 0; k < binCount; k++) mean[k] += sum[k] * scale;
      }
      return wrap(mean);
    },
  };
}

/**
 * Each bin's share of the signal's mean square: amplitude²/(2·ENBW) for the doubled one-sided bins,
 * amplitude²/ENBW at DC and Nyquist. The shares of a broadband signal sum to its mean square
 * (Parseval's theorem applied to the windowed frame).
 */
export function meanSquarePerBin(s: LongTermSpectrum): Float64Array {
  const out = new Float64Array(s.binCount);
  const last = s.binCount - 1;
  for (let k = 0; k <= last; k++) {
    const doubled = k > 0 && k < last;
    out[k] = s.amplitudeSquared[k] / ((doubled ? 2 : 1) * s.noiseBandwidthBins);
  }
  return out;
}

export function isSilentSpectrum(s: LongTermSpectrum): boolean {
  for (let k = 0; k < s.binCount; k++) if (s.amplitudeSquared[k] > 0) return false;
  return true;
}
