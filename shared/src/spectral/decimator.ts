/**
 * Streaming integer-factor decimation for the low-frequency analysis, by a cubed moving average
 * (three cascaded boxcars of the factor's length, i.e. a third-order CIC response, evaluated as a short
 * FIR at the output instants only, ≈ 3 multiply-adds per input sample). Its nulls sit on multiples of the
 * new rate, so what folds back onto 0 … 500 Hz is cut by ≥ 60 dB, and the droop at 500 Hz is ≈ 0.3 dB.
 */
import type { AudioBlock } from "../types/analysis.ts";

export interface Decimator {
  /**
   * Decimates one block; `onOutput` receives the output block (arrays reused between calls). Outputs
   * before `firstNeededOutput` are not computed (the consumer skips them anyway), so its block may
   * start later than the last one ended.
   */
  push(block: AudioBlock, onOutput: (out: AudioBlock) => void, firstNeededOutput?: number): void;
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
  const history = taps.length - 1;
  let staging: Float32Array[] = [];
  let outputs: Float32Array[] = [];
  let capacity = 0;
  let nextInputFrame = 0;

  function ensureCapacity(frames: number): void {
    if (frames <= capacity) return;
    // Grows only when a longer block than any before arrives: the reader's block size, in practice once.
    capacity = frames;
    staging = Array.from({ length: channels }, (_, c) => {
      const grown = new Float32Array(history + frames);
      if (staging[c]) grown.set(staging[c].subarray(0, history));
      return grown;
    });
    outputs = Array.from({ length: channels }, () => new Float32Array(Math.ceil(frames / factor) + 1));
  }

  return {
    push(block, onOutput, firstNeededOutput = 0) {
      if (block.startFrame !== nextInputFrame) {
        throw new Error(`decimator needs contiguous blocks: expected startFrame ${nextInputFrame}, got ${block.startFrame}`);
      }
      const frames = block.frames;
      ensureCapacity(frames);
      const start = block.startFrame;
      const firstOutput = Math.max(Math.ceil(start / factor), firstNeededOutput);
      const lastOutput = Math.floor((start + frames - 1) / factor);
      const count = Math.max(0, lastOutput - firstOutput + 1);
      for (let c = 0; c < channels; c++) {
        const stage = staging[c];
        const src = block.channels[c];
        for (let i = 0; i < frames; i++) stage[history + i] = src[i];
        const out = outputs[c];
        for (let m = 0; m < count; m++) {
          // y[m] = Σ_j h[j]·x[mD − j]; x[mD] sits at stage[history + mD − start].
          const at = history + (firstOutput + m) * factor - start;
          let acc = 0;
          for (let j = 0; j < taps.length; j++) acc += taps[j] * stage[at - j];
          out[m] = acc;
        }
        // Keep the last `history` inputs for the next block's first outputs.
        stage.copyWithin(0, frames, frames + history);
      }
      nextInputFrame = start + frames;
      if (count > 0) onOutput({ channels: outputs, frames: count, startFrame: firstOutput });
    },
  };
}
