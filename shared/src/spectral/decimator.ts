/**
 * Streaming integer-factor decimation for the low-frequency analyses, by a cubed moving average
 * (three cascaded boxcars of the factor's length, i.e. a third-order CIC response, evaluated as a short
 * FIR at the output instants only, ≈ 3 multiply-adds per input sample). Its nulls sit on multiples of the
 * new rate, so what folds back onto 0 … 560 Hz is cut by ≥ 59 dB, and the droop at 500 Hz is ≈ 0.3 dB.
 * Outputs are computed on demand, range by range, reading the block in place, so a consumer that only
 * needs frames here and there does not pay for the gaps.
 */
import type { AudioBlock } from "../types/analysis.ts";

export interface Decimator {
  /**
   * Takes the next input block (blocks must be contiguous) and returns the output indices it makes
   * computable, [firstOutput, endOutput).
   */
  stage(block: AudioBlock): { firstOutput: number; endOutput: number };
  /** Computes outputs [from, to) of the staged block; `onOutput` gets them as a block (arrays reused). */
  compute(from: number, to: number, onOutput: (out: AudioBlock) => void): void;
}

/** Taps of the cubed moving average of length `factor`, summing to 1 (unity gain at DC). */
export function cubedBoxcarTaps(factor: number): Float64Array {
  const box = new Float64Array(factor).fill(1 / factor);
  return convolve(convolve(box, box), box);
}

function convolve(a: Float64Array, b: Float64Array): Float64Array {
  const out = new Float64Array(a.length + b.length - 1);
  for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) out[i + j] += a[i] * b[j];
  return out;
}

export function createDecimator(o: { channels: number; factor: number }): Decimator {
  const { channels, factor } = o;
  if (!Number.isInteger(factor) || factor < 1) throw new Error(`decimation factor must be a positive integer, got ${factor}`);
  const taps = cubedBoxcarTaps(factor);
  const tapCount = taps.length;
  const history = tapCount - 1;
  // The block is read in place (valid until the next stage); only the `history` inputs before it are kept.
  let before = Array.from({ length: channels }, () => new Float32Array(history));
  let after = Array.from({ length: channels }, () => new Float32Array(history));
  let block: Float32Array[] = [];
  let outputs: Float32Array[] = [];
  let stagedStart = 0;
  let nextInputFrame = 0;
  let range = { firstOutput: 0, endOutput: 0 };

  return {
    stage(next) {
      if (next.startFrame !== nextInputFrame) {
        throw new Error(`decimator needs contiguous blocks: expected startFrame ${nextInputFrame}, got ${next.startFrame}`);
      }
      // The reader reuses its arrays, so what the next block needs from this one is saved now:
      // `before` becomes what preceded this block, `after` the last `history` inputs up to its end.
      [before, after] = [after, before];
      const frames = next.frames;
      for (let c = 0; c < channels; c++) {
        const into = after[c];
        for (let i = 0; i < history; i++) {
          const k = frames - history + i; // index in this block; negative: in `before`
          into[i] = k >= 0 ? next.channels[c][k] : before[c][history + k];
        }
      }
      block = next.channels;
      if (outputs.length === 0 || outputs[0].length < Math.ceil(frames / factor) + 1) {
        // Grows only when a longer block than any before arrives: the reader's block size, in practice once.
        outputs = Array.from({ length: channels }, () => new Float32Array(Math.ceil(frames / factor) + 1));
      }
      stagedStart = next.startFrame;
      nextInputFrame = next.startFrame + frames;
      const firstOutput = Math.ceil(stagedStart / factor);
      range = { firstOutput, endOutput: frames > 0 ? Math.floor((nextInputFrame - 1) / factor) + 1 : firstOutput };
      return range;
    },
    compute(from, to, onOutput) {
      const first = Math.max(from, range.firstOutput);
      const end = Math.min(to, range.endOutput);
      const count = end - first;
      if (count <= 0) return;
      for (let c = 0; c < channels; c++) {
        const src = block[c];
        const prior = before[c];
        const out = outputs[c];
        for (let m = 0; m < count; m++) {
          // y[m] = Σ_j h[j]·x[mD − j], with x[mD] at src[mD − stagedStart].
          const at = (first + m) * factor - stagedStart;
          let acc = 0;
          if (at >= history) {
            for (let j = 0; j < tapCount; j++) acc += taps[j] * src[at - j];
          } else {
            for (let j = 0; j < tapCount; j++) acc += taps[j] * (at - j >= 0 ? src[at - j] : prior[history + at - j]);
          }
          out[m] = acc;
        }
      }
      onOutput({ channels: outputs, frames: count, startFrame: first });
    },
  };
}
