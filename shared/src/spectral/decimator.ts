/**
 * Streaming integer-factor decimation for the low-frequency analyses, by a cubed moving average
 * (three cascaded boxcars of the factor's length, i.e. a third-order CIC response, evaluated as a short
 * FIR at the output instants only, ≈ 3 multiply-adds per input sample). Its nulls sit on multiples of the
 * new rate, so what folds back onto 0 … 560 Hz is cut by ≥ 59 dB, and the droop at 500 Hz is ≈ 0.3 dB.
 * Outputs are computed on demand, range by range, reading the block in place, so a consumer that only
 * needs frames here and there does not pay for the gaps.
 */
import type { AudioBlock } from "../types/analysis.ts";
import { createDecimatorKernels, type DecimatorKernels } from "./decimatorKernels.ts";

export interface Decimator {
  /** Where the FIR runs: WebAssembly (decimatorKernels.wat) or, where the runtime has none, JavaScript. Same outputs. */
  readonly engine: "wasm" | "js";
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

/**
 * Block length the WebAssembly kernel's memory is first made for: the CLI reader's (DEFAULT_BLOCK_FRAMES in
 * cli/src/audio/readAudioFile.ts). A longer block gets an instance of its own, made then.
 */
const KERNEL_BLOCK_FRAMES = 65536;

/** The kernel's instance and its memory's layout: taps, then each channel's staged block, then its outputs. */
interface KernelSpace {
  kernels: DecimatorKernels;
  blockFrames: number;
  inAt: number;
  outAt: number;
  outFrames: number;
  inputs: Float32Array[];
  outputs: Float32Array[];
}

/** `useWasm: false` runs the JavaScript loops only (tests compare the two). */
export function createDecimator(o: { channels: number; factor: number; useWasm?: boolean }): Decimator {
  const { channels, factor } = o;
  if (!Number.isInteger(factor) || factor < 1) throw new Error(`decimation factor must be a positive integer, got ${factor}`);
  const taps = cubedBoxcarTaps(factor);
  const tapCount = taps.length;
  const history = tapCount - 1;
  // The FIR in WebAssembly where the runtime has it (decimatorKernels.wat: the same outputs to the bit).
  // Made now, inside the caller's kernel arena if any, for the reader's block length.
  const kernelSpace = (blockFrames: number): KernelSpace | null => {
    const outFrames = Math.ceil(blockFrames / factor) + 1;
    const inAt = 8 * tapCount;
    const outAt = inAt + 4 * blockFrames * channels;
    const kernels = createDecimatorKernels(outAt + 4 * outFrames * channels);
    if (kernels === null) return null;
    const heap = kernels.memory.buffer;
    new Float64Array(heap, 0, tapCount).set(taps);
    const inputs = Array.from({ length: channels }, (_, c) => new Float32Array(heap, inAt + 4 * blockFrames * c, blockFrames));
    const outputs = Array.from({ length: channels }, (_, c) => new Float32Array(heap, outAt + 4 * outFrames * c, outFrames));
    return { kernels, blockFrames, inAt, outAt, outFrames, inputs, outputs };
  };
  let space = o.useWasm === false ? null : kernelSpace(KERNEL_BLOCK_FRAMES);
  // The block is read in place (valid until the next stage); only the `history` inputs before it are kept.
  let before = Array.from({ length: channels }, () => new Float32Array(history));
  let after = Array.from({ length: channels }, () => new Float32Array(history));
  let block: Float32Array[] = [];
  let outputs: Float32Array[] = [];
  let stagedStart = 0;
  let nextInputFrame = 0;
  let range = { firstOutput: 0, endOutput: 0 };

  return {
    get engine() {
      return space === null ? "js" : "wasm";
    },
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
      if (space !== null && frames > space.blockFrames) space = kernelSpace(frames);
      if (space !== null) {
        // The kernel reads the block from its memory and writes the outputs there (outputs are views of it).
        for (let c = 0; c < channels; c++) space.inputs[c].set(frames === next.channels[c].length ? next.channels[c] : next.channels[c].subarray(0, frames));
        outputs = space.outputs;
      } else if (outputs.length === 0 || outputs[0].length < Math.ceil(frames / factor) + 1) {
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
        let m = 0;
        // y[m] = Σ_j h[j]·x[mD − j], with x[mD] at src[mD − stagedStart]; the first few reach back into `prior`.
        for (; m < count; m++) {
          const at = (first + m) * factor - stagedStart;
          if (at >= history) break;
          let acc = 0;
          for (let j = 0; j < tapCount; j++) acc += taps[j] * (at - j >= 0 ? src[at - j] : prior[history + at - j]);
          out[m] = acc;
        }
        if (m === count) continue;
        const at = (first + m) * factor - stagedStart;
        if (space !== null) space.kernels.fir(space.inAt + 4 * (c * space.blockFrames + at), factor, count - m, 0, tapCount, space.outAt + 4 * (c * space.outFrames + m));
        else if (tapCount === 22) decimate22(src, at, factor, out, m, count, taps);
        else {
          for (let i = at; m < count; m++, i += factor) {
            let acc = 0;
            for (let j = 0; j < tapCount; j++) acc += taps[j] * src[i - j];
            out[m] = acc;
          }
        }
      }
      onOutput({ channels: outputs, frames: count, startFrame: first });
    },
  };
}

/**
 * The 22 taps of factor 8 (44.1 and 48 kHz) unrolled, with the taps in locals: several times faster than the
 * loop in V8. Summed in the loop's order from 0, so the outputs are the same to the bit.
 */
function decimate22(src: Float32Array, at: number, step: number, out: Float32Array, m: number, count: number, t: Float64Array): void {
  const t0 = t[0], t1 = t[1], t2 = t[2], t3 = t[3], t4 = t[4], t5 = t[5], t6 = t[6], t7 = t[7], t8 = t[8], t9 = t[9], t10 = t[10];
  const t11 = t[11], t12 = t[12], t13 = t[13], t14 = t[14], t15 = t[15], t16 = t[16], t17 = t[17], t18 = t[18], t19 = t[19], t20 = t[20], t21 = t[21];
  for (let i = at; m < count; m++, i += step) {
    out[m] =
      0 + t0 * src[i] + t1 * src[i - 1] + t2 * src[i - 2] + t3 * src[i - 3] + t4 * src[i - 4] + t5 * src[i - 5] + t6 * src[i - 6] +
      t7 * src[i - 7] + t8 * src[i - 8] + t9 * src[i - 9] + t10 * src[i - 10] + t11 * src[i - 11] + t12 * src[i - 12] +
      t13 * src[i - 13] + t14 * src[i - 14] + t15 * src[i - 15] + t16 * src[i - 16] + t17 * src[i - 17] + t18 * src[i - 18] +
      t19 * src[i - 19] + t20 * src[i - 20] + t21 * src[i - 21];
  }
}
