/**
 * Runs of identical consecutive sample values per channel: the raw material of dropouts (runs of exact
 * zero) and stuck samples (runs of one non-zero value). One comparison per sample; runs shorter than
 * `minLength` are never reported.
 */
import { createLevelKernels, type LevelKernels } from "./levelKernels.ts";

export interface ValueRun {
  channel: number;
  value: number;
  startFrame: number;
  length: number;
  /** The samples just before and after the run; null at the start or end of the stream. */
  before: number | null;
  after: number | null;
}

export interface ValueRunTracker {
  push(input: Float32Array[], frames: number): void;
  /** Reports the runs still open at the end of the stream (with `after` null). */
  finish(): void;
}

/**
 * `kernels`: "auto" searches for equal neighbours in the WebAssembly SIMD kernel where the runtime has one,
 * "js" always in JavaScript (the same runs; tests compare the two).
 */
export function createValueRunTracker(channels: number, minLength: number, onRun: (run: ValueRun) => void, kernels: "auto" | "js" = "auto"): ValueRunTracker {
  return new RunTracker(channels, Math.max(2, minLength), onRun, kernels === "auto");
}


/**
 * Per channel it carries the run that the previous block ended in: its value (NaN before the first sample),
 * first frame, and the sample before it. Inside a block the common case — each sample differs from the
 * last — costs one comparison; only where two neighbours are equal is a run measured.
 */
class RunTracker implements ValueRunTracker {
  private readonly last: Float64Array;
  private readonly lastStart: Float64Array;
  private readonly beforeLast: Float64Array;
  private position = 0;
  /** Each channel's samples of the current block in the kernel's memory, stageFrames apart. */
  private stage: Float32Array | null = null;
  private stageFrames = 0;
  /** The SIMD kernel, made at the first block (null before it, or for the JavaScript loops). */
  private kernels: LevelKernels | null = null;

  constructor(
    private readonly channels: number,
    private readonly minLength: number,
    private readonly onRun: (run: ValueRun) => void,
    private useKernels: boolean,
  ) {
    this.last = new Float64Array(channels).fill(NaN);
    this.lastStart = new Float64Array(channels);
    this.beforeLast = new Float64Array(channels).fill(NaN);
  }


  private report(c: number, value: number, startFrame: number, endFrame: number, before: number, after: number | null): void {
    if (endFrame - startFrame < this.minLength || Number.isNaN(value)) return;
    this.onRun({ channel: c, value, startFrame, length: endFrame - startFrame, before: Number.isNaN(before) ? null : before, after });
  }

  push(input: Float32Array[], frames: number): void {
    if (frames <= 0) return;
    if (this.useKernels && frames > this.stageFrames) {
      // Whole blocks, so runs are reported in the same order as without the kernel. A bigger block than the
      // memory holds gets a new instance: growing the memory would detach its buffer (see kernelModule.ts).
      const kernels = (this.kernels = createLevelKernels(this.channels * frames * 4));
      if (kernels) {
        this.stageFrames = Math.floor(kernels.memory.buffer.byteLength / (4 * this.channels));
        this.stage = new Float32Array(kernels.memory.buffer, 0, this.channels * this.stageFrames);
      } else {
        this.useKernels = false;
        this.stage = null;
        this.stageFrames = 0;
      }
    }
    for (let c = 0; c < this.channels; c++) {
      this.stage?.set(input[c].subarray(0, frames), c * this.stageFrames);
      this.scan(c, input[c], frames);
    }
    this.position += frames;
  }

  private scan(c: number, x: Float32Array, frames: number): void {
    const base = this.position;
    const last = this.last[c];
    // 1. The run carried from the previous block: does it continue?
    let i = 0;
    while (i < frames && x[i] === last) i++;
    if (i === frames) return;
    this.report(c, last, this.lastStart[c], base + i, this.beforeLast[c], x[i]);
    // 2. Within the block: find neighbours that are equal, then measure the run they begin. A run starting
    // at index r follows x[r − 1], or the carried value when r = 0.
    let k = i + 1;
    for (;;) {
      // The previous sample rides in a local: one load a sample (or four at once in the kernel).
      if (this.kernels && k < frames) k = this.kernels.findEqual(c * this.stageFrames * 4, k, frames);
      else if (k < frames) {
        let prev = x[k - 1];
        for (; k < frames; k++) {
          const v = x[k];
          if (v === prev) break;
          prev = v;
        }
      }
      if (k >= frames) break;
      const value = x[k];
      const runStart = k - 1;
      const before = runStart > 0 ? x[runStart - 1] : last;
      let j = k + 1;
      while (j < frames && x[j] === value) j++;
      if (j === frames) {
        this.last[c] = value;
        this.lastStart[c] = base + runStart;
        this.beforeLast[c] = before;
        return;
      }
      this.report(c, value, base + runStart, base + j, before, x[j]);
      k = j + 1;
    }
    // 3. The block ends on a run of one sample.
    this.last[c] = x[frames - 1];
    this.lastStart[c] = base + frames - 1;
    this.beforeLast[c] = frames >= 2 ? x[frames - 2] : last;
  }

  finish(): void {
    for (let c = 0; c < this.channels; c++) {
      this.report(c, this.last[c], this.lastStart[c], this.position, this.beforeLast[c], null);
      this.last[c] = NaN;
    }
  }
}
