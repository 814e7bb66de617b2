/**
 * Peak envelope for the overview strip: per column, the min and max sample over all channels.
 * Every sample is read (a peak between STFT frames must still show), in runs of one column at a time.
 */
import type { AudioBlock, WaveformEnvelope } from "../types/analysis.ts";
import { kernelModule, type KernelInstance } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./waveformKernels.generated.ts";

const instantiate = kernelModule(WASM_MODULE_BYTES);

type Envelope = (base: number, stride: number, channels: number, frames: number, position: number, column: number, columns: number, total: number, minAt: number, maxAt: number) => number;

export interface WaveformAccumulator {
  push(block: AudioBlock): void;
  finish(): WaveformEnvelope;
}

/**
 * `kernels: "js"` runs the JavaScript loop even where waveformKernels.wat's could (the same compares in the
 * same order: tests/shared/waveformEnvelope.test.ts compares them). The kernel serves short files (issue #22),
 * whose one pass V8 ran unoptimised and then paid to optimise.
 */
export function createWaveformAccumulator(o: { columns: number; totalFrames: number; sampleRateHz: number; kernels?: "auto" | "js" }): WaveformAccumulator {
  const { columns, totalFrames } = o;
  if (!Number.isInteger(columns) || columns < 1) throw new Error(`waveform columns must be a positive integer, got ${columns}`);
  const min = new Float32Array(columns).fill(Infinity);
  const max = new Float32Array(columns).fill(-Infinity);
  // Column c holds frames [start(c), start(c + 1)); the last column also takes any frames past totalFrames.
  const start = (c: number): number => (c >= columns ? Infinity : Math.ceil((c * totalFrames) / columns));
  let column = 0;
  let columnEnd = start(1);
  let framesSeen = 0;
  // The kernel's memory: min and max, then the block's channels (`stride` frames each); a bigger block makes a new one.
  let useKernel = o.kernels !== "js";
  let kernel: KernelInstance | null = null;
  let stride = 0;
  const extremaBytes = 8 * columns;

  /** The block's envelope in the kernel; false where there is none. */
  function pushInKernel(block: AudioBlock, position: number): boolean {
    const channels = block.channels.length;
    if (kernel === null || block.frames > stride) {
      kernel = instantiate(extremaBytes + 4 * channels * block.frames);
      if (kernel === null) {
        useKernel = false;
        return false;
      }
      stride = Math.floor((kernel.memory.buffer.byteLength - extremaBytes) / (4 * Math.max(1, channels)));
    }
    const buffer = kernel.memory.buffer;
    const inMin = new Float32Array(buffer, 0, columns);
    const inMax = new Float32Array(buffer, 4 * columns, columns);
    inMin.set(min);
    inMax.set(max);
    for (let c = 0; c < channels; c++) new Float32Array(buffer, extremaBytes + 4 * stride * c, block.frames).set(block.channels[c].subarray(0, block.frames));
    column = (kernel.exports.envelope as Envelope)(extremaBytes, stride, channels, block.frames, position, column, columns, totalFrames, 0, 4 * columns);
    columnEnd = start(column + 1);
    min.set(inMin);
    max.set(inMax);
    return true;
  }

  return {
    push(block) {
      const frames = block.frames;
      let position = block.startFrame;
      if (position < start(column) || position >= columnEnd) {
        column = Math.min(columns - 1, Math.max(0, Math.floor((position * columns) / Math.max(1, totalFrames))));
        while (column > 0 && position < start(column)) column--;
        while (position >= start(column + 1)) column++;
        columnEnd = start(column + 1);
      }
      if (useKernel && frames > 0 && pushInKernel(block, position)) {
        framesSeen = Math.max(framesSeen, position + frames);
        return;
      }
      let i = 0;
      while (i < frames) {
        while (position >= columnEnd) {
          column++;
          columnEnd = start(column + 1);
        }
        const n = Math.min(frames - i, columnEnd - position);
        let lo = min[column];
        let hi = max[column];
        const channels = block.channels;
        const end = i + n;
        let c = 0;
        // Channels two at a time: the pair's compares overlap, about twice as fast as one channel after the other.
        for (; c + 1 < channels.length; c += 2) {
          const x = channels[c];
          const y = channels[c + 1];
          for (let j = i; j < end; j++) {
            const v = x[j];
            const w = y[j];
            if (v < lo) lo = v;
            if (v > hi) hi = v;
            if (w < lo) lo = w;
            if (w > hi) hi = w;
          }
        }
        if (c < channels.length) {
          const x = channels[c];
          for (let j = i; j < end; j++) {
            const v = x[j];
            if (v < lo) lo = v;
            if (v > hi) hi = v;
          }
        }
        min[column] = lo;
        max[column] = hi;
        i += n;
        position += n;
      }
      framesSeen = Math.max(framesSeen, position);
    },
    finish() {
      // With fewer samples than columns some columns own none: they repeat the one before (a sample
      // drawn wide). Columns past the last sample that arrived stay NaN.
      for (let c = 0; c < columns; c++) {
        if (min[c] <= max[c]) continue;
        const isCovered = framesSeen > 0 && start(c) <= framesSeen;
        min[c] = isCovered && c > 0 ? min[c - 1] : NaN;
        max[c] = isCovered && c > 0 ? max[c - 1] : NaN;
      }
      return { columns, min, max, durationSeconds: totalFrames / o.sampleRateHz };
    },
  };
}
