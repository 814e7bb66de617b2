/**
 * Per-channel statistics over consecutive 50 ms windows on the absolute frame grid: Σx, Σx², peak |x| and
 * where it is, and Σx₀x₁ for the first channel pair. Silence, noise floor, dropout context, stereo
 * correlation and the whole-file levels are all built from these, so the per-sample work is done once.
 */
import { FrameGrid } from "./frameGrid.ts";
import { createLevelKernels, type LevelKernels } from "./levelKernels.ts";

/** Window length: short enough to place silences and dropouts, long enough to average (common practice). */
export const LEVEL_WINDOW_SECONDS = 0.05;

export interface LevelWindow {
  index: number;
  startFrame: number;
  frames: number;
  /** Per channel (reused arrays: read during the callback only). */
  sum: Float64Array;
  sumSquares: Float64Array;
  peakAbs: Float64Array;
  peakFrame: Float64Array;
  /** Σ x₀·x₁ over the window (0 for mono). */
  crossProduct: number;
}

export interface LevelWindowAccumulator {
  push(input: Float32Array[], frames: number): void;
  /** Emits the last, partial window. */
  finish(): void;
}

/**
 * `kernels: "js"` runs the JavaScript loops even where levelKernels.wat's windowSums could (tests compare the
 * two: the same sums in the same order, so the same bits). The kernels serve short files (issue #22), where
 * V8 would run the loops unoptimised and then spend more compiling them than they take.
 */
export function createLevelWindows(sampleRateHz: number, channels: number, onWindow: (w: LevelWindow) => void, kernels: "auto" | "js" = "auto"): LevelWindowAccumulator {
  return new WindowAccumulator(sampleRateHz, channels, onWindow, kernels === "auto");
}

/** The kernels' state area: seven f64 and two i32 (levelKernels.wat's windowSumsPair), before the staged block. */
const STATE_BYTES = 64;

class WindowAccumulator implements LevelWindowAccumulator {
  private readonly grid: FrameGrid;
  private readonly window: LevelWindow;
  private position = 0;
  private windowEnd: number;

  /** The block staged in the kernels' memory, channel after channel (null: the JavaScript loops run). */
  private kernels: LevelKernels | null = null;
  private stage: Float32Array | null = null;
  private stageFrames = 0;
  private stateF64: Float64Array | null = null;
  private stateI32: Int32Array | null = null;

  constructor(
    sampleRateHz: number,
    private readonly channels: number,
    private readonly onWindow: (w: LevelWindow) => void,
    private useKernels: boolean,
  ) {
    this.grid = new FrameGrid(sampleRateHz, LEVEL_WINDOW_SECONDS);
    this.windowEnd = this.grid.boundary(1);
    this.window = {
      index: 0,
      startFrame: 0,
      frames: 0,
      sum: new Float64Array(channels),
      sumSquares: new Float64Array(channels),
      peakAbs: new Float64Array(channels),
      peakFrame: new Float64Array(channels),
      crossProduct: 0,
    };
  }

  /** Copies the block into the kernels' memory (a new instance when it outgrows the last); false without kernels. */
  private staged(input: Float32Array[], frames: number): boolean {
    if (!this.useKernels) return false;
    if (this.kernels === null || frames > this.stageFrames) {
      const kernels = createLevelKernels(STATE_BYTES + this.channels * frames * 4);
      if (kernels === null) {
        this.useKernels = false;
        return false;
      }
      this.kernels = kernels;
      this.stageFrames = Math.floor((kernels.memory.buffer.byteLength - STATE_BYTES) / (4 * this.channels));
      this.stage = new Float32Array(kernels.memory.buffer, STATE_BYTES, this.channels * this.stageFrames);
      this.stateF64 = new Float64Array(kernels.memory.buffer, 0, 7);
      this.stateI32 = new Int32Array(kernels.memory.buffer, 56, 2);
    }
    for (let c = 0; c < this.channels; c++) (this.stage as Float32Array).set(input[c].subarray(0, frames), c * this.stageFrames);
    return true;
  }

  push(input: Float32Array[], frames: number): void {
    const staged = this.staged(input, frames);
    let at = 0;
    while (at < frames) {
      const n = Math.min(frames - at, this.windowEnd - this.position);
      let c = 0;
      if (this.channels >= 2) {
        // The first pair in one loop with Σx₀x₁: independent sums overlap, and the data is read once.
        if (staged) this.accumulatePairStaged(at, n);
        else this.accumulatePair(input[0], input[1], at, n);
        c = 2;
      }
      for (; c < this.channels; c++) {
        if (staged) this.accumulateStaged(c, at, n);
        else this.accumulate(c, input[c], at, n);
      }
      at += n;
      this.position += n;
      if (this.position === this.windowEnd) this.emit();
    }
  }

  /** accumulate in levelKernels.wat's windowSums, on the staged block. */
  private accumulateStaged(c: number, from: number, n: number): void {
    const w = this.window;
    const st = this.stateF64 as Float64Array;
    const at = this.stateI32 as Int32Array;
    st[0] = w.sum[c];
    st[1] = w.sumSquares[c];
    st[2] = w.peakAbs[c];
    (this.kernels as LevelKernels).windowSums(STATE_BYTES + 4 * c * this.stageFrames, from, n, 0);
    w.sum[c] = st[0];
    w.sumSquares[c] = st[1];
    if (at[0] >= 0) {
      w.peakAbs[c] = st[2];
      w.peakFrame[c] = this.position + (at[0] - from);
    }
  }

  /** accumulatePair in levelKernels.wat's windowSumsPair, on the staged block. */
  private accumulatePairStaged(from: number, n: number): void {
    const w = this.window;
    const st = this.stateF64 as Float64Array;
    const at = this.stateI32 as Int32Array;
    st[0] = w.sum[0];
    st[1] = w.sum[1];
    st[2] = w.sumSquares[0];
    st[3] = w.sumSquares[1];
    st[4] = w.crossProduct;
    st[5] = w.peakAbs[0];
    st[6] = w.peakAbs[1];
    (this.kernels as LevelKernels).windowSumsPair(STATE_BYTES, STATE_BYTES + 4 * this.stageFrames, from, n, 0);
    w.sum[0] = st[0];
    w.sum[1] = st[1];
    w.sumSquares[0] = st[2];
    w.sumSquares[1] = st[3];
    w.crossProduct = st[4];
    if (at[0] >= 0) {
      w.peakAbs[0] = st[5];
      w.peakFrame[0] = this.position + (at[0] - from);
    }
    if (at[1] >= 0) {
      w.peakAbs[1] = st[6];
      w.peakFrame[1] = this.position + (at[1] - from);
    }
  }

  private accumulate(c: number, x: Float32Array, from: number, n: number): void {
    const w = this.window;
    let sum = w.sum[c];
    let sumSquares = w.sumSquares[c];
    let peak = w.peakAbs[c];
    let peakAt = -1;
    const end = from + n;
    for (let i = from; i < end; i++) {
      const v = x[i];
      sum += v;
      sumSquares += v * v;
      const a = Math.abs(v);
      if (a > peak) {
        peak = a;
        peakAt = i;
      }
    }
    w.sum[c] = sum;
    w.sumSquares[c] = sumSquares;
    if (peakAt >= 0) {
      w.peakAbs[c] = peak;
      w.peakFrame[c] = this.position + (peakAt - from);
    }
  }

  private accumulatePair(x: Float32Array, y: Float32Array, from: number, n: number): void {
    const w = this.window;
    let sumX = w.sum[0];
    let sumY = w.sum[1];
    let sqX = w.sumSquares[0];
    let sqY = w.sumSquares[1];
    let xy = w.crossProduct;
    let peakX = w.peakAbs[0];
    let peakY = w.peakAbs[1];
    let atX = -1;
    let atY = -1;
    const end = from + n;
    for (let i = from; i < end; i++) {
      const u = x[i];
      const v = y[i];
      sumX += u;
      sumY += v;
      sqX += u * u;
      sqY += v * v;
      xy += u * v;
      // Math.abs is a bit mask; `u < 0 ? -u : u` is a branch that noise mispredicts half the time.
      const a = Math.abs(u);
      if (a > peakX) {
        peakX = a;
        atX = i;
      }
      const b = Math.abs(v);
      if (b > peakY) {
        peakY = b;
        atY = i;
      }
    }
    w.sum[0] = sumX;
    w.sum[1] = sumY;
    w.sumSquares[0] = sqX;
    w.sumSquares[1] = sqY;
    w.crossProduct = xy;
    if (atX >= 0) {
      w.peakAbs[0] = peakX;
      w.peakFrame[0] = this.position + (atX - from);
    }
    if (atY >= 0) {
      w.peakAbs[1] = peakY;
      w.peakFrame[1] = this.position + (atY - from);
    }
  }

  private emit(): void {
    const w = this.window;
    w.frames = this.position - w.startFrame;
    if (w.frames > 0) this.onWindow(w);
    w.index++;
    w.startFrame = this.position;
    w.sum.fill(0);
    w.sumSquares.fill(0);
    w.peakAbs.fill(0);
    w.peakFrame.fill(this.position);
    w.crossProduct = 0;
    this.windowEnd = this.grid.boundary(w.index + 1);
  }

  finish(): void {
    if (this.position > this.window.startFrame) this.emit();
  }
}
