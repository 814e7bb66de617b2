/**
 * Streaming halving of the sample rate for the fingerprint's resampler, by the cubed two-point
 * average (taps 1, 3, 3, 1 over 8): four multiply-adds an output, where the Kaiser kernel after it
 * then needs half the taps at the halved rate. Its response is cos³(πf/rate): unity at DC, a null at
 * the old Nyquist, and ≥ 33 dB against whatever folds onto 0–4 kHz for any input rate ≥ 44.1 kHz
 * (sin³(π·4000/44100)); the droop, ≈ 1 dB at 4 kHz, tilts the band a little alike for every rate.
 */

export interface HalvingStage {
  readonly channels: number;
  /**
   * Halves `inputs[c][0, count)` into `outputs[c]` (each at least ⌊count/2⌋ + 1 long) and returns
   * how many samples it wrote per channel. An odd sample left over waits for the next block.
   */
  push(inputs: readonly Float32Array[], count: number, outputs: readonly Float32Array[]): number;
  /** Writes the output a leftover odd sample makes (the next sample taken as silence): 0 or 1. */
  end(outputs: readonly Float32Array[]): number;
}

/** The lowest input rate a halving keeps the fingerprint band clean for (see above). */
export const MIN_HALVING_INPUT_HZ = 44100;

/**
 * A push's checks, shared by the JavaScript stage here and the SIMD one; returns how many outputs it writes
 * (one per input pair completed, counting a pending odd input).
 */
export function checkHalvingPush(channels: number, ended: boolean, odd: boolean, inputs: readonly Float32Array[], count: number, outputs: readonly Float32Array[]): number {
  if (ended) throw new Error("halving stage: push after end()");
  if (inputs.length !== channels) throw new RangeError(`halving stage: expected ${channels} inputs, got ${inputs.length}`);
  const written = Math.floor((count + (odd ? 1 : 0)) / 2);
  checkHalvingOutputs(channels, outputs, written);
  return written;
}

/** The output checks of every halving stage (the JavaScript one here and the SIMD one). */
export function checkHalvingOutputs(channels: number, outputs: readonly Float32Array[], needed: number): void {
  if (outputs.length !== channels) throw new RangeError(`halving stage: expected ${channels} outputs, got ${outputs.length}`);
  for (const y of outputs) if (y.length < needed) throw new RangeError(`halving stage: an output holds ${y.length}, needs ${needed}`);
}

export function createHalvingStage(channels: number): HalvingStage {
  if (!Number.isInteger(channels) || channels < 1) throw new RangeError(`channels must be an integer ≥ 1, got ${channels}`);
  // Output j = (x[2j−2] + 3·x[2j−1] + 3·x[2j] + x[2j+1]) / 8, made when x[2j+1] arrives; x before
  // the file is silence. Per channel the three newest inputs: a = x[m−3], b = x[m−2], c = x[m−1].
  const history = new Float64Array(3 * channels);
  let odd = false; // the next input has an odd index, so it completes an output
  let ended = false;

  return {
    channels,
    push(inputs, count, outputs) {
      const written = checkHalvingPush(channels, ended, odd, inputs, count, outputs);
      for (let ch = 0; ch < channels; ch++) {
        const x = inputs[ch];
        const y = outputs[ch];
        let a = history[3 * ch];
        let b = history[3 * ch + 1];
        let c = history[3 * ch + 2];
        let i = 0;
        let n = 0;
        if (odd && count > 0) {
          const e = x[0];
          y[n++] = (a + 3 * (b + c) + e) * 0.125;
          a = b;
          b = c;
          c = e;
          i = 1;
        }
        for (; i + 1 < count; i += 2) {
          // x[i] has an even index m, x[i + 1] the odd m + 1 that completes the output.
          const e0 = x[i];
          const e1 = x[i + 1];
          y[n++] = (b + 3 * (c + e0) + e1) * 0.125;
          a = c;
          b = e0;
          c = e1;
        }
        if (i < count) {
          a = b;
          b = c;
          c = x[i];
        }
        history[3 * ch] = a;
        history[3 * ch + 1] = b;
        history[3 * ch + 2] = c;
      }
      odd = (odd ? 1 : 0) + (count % 2) === 1;
      return written;
    },
    end(outputs) {
      if (ended) return 0;
      ended = true;
      if (!odd) return 0;
      checkHalvingOutputs(channels, outputs, 1);
      for (let ch = 0; ch < channels; ch++) {
        const a = history[3 * ch];
        const b = history[3 * ch + 1];
        const c = history[3 * ch + 2];
        outputs[ch][0] = (a + 3 * (b + c)) * 0.125;
      }
      return 1;
    },
  };
}
