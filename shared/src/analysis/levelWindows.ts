/**
 * Per-channel statistics over consecutive 50 ms windows on the absolute frame grid: Σx, Σx², peak |x| and
 * where it is, and Σx₀x₁ for the first channel pair. Silence, noise floor, dropout context, stereo
 * correlation and the whole-file levels are all built from these, so the per-sample work is done once.
 */
import { FrameGrid } from "./frameGrid.ts";

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

export function createLevelWindows(sampleRateHz: number, channels: number, onWindow: (w: LevelWindow) => void): LevelWindowAccumulator {
  return new WindowAccumulator(sampleRateHz, channels, onWindow);
}

class WindowAccumulator implements LevelWindowAccumulator {
  private readonly grid: FrameGrid;
  private readonly window: LevelWindow;
  private position = 0;
  private windowEnd: number;

  constructor(
    sampleRateHz: number,
    private readonly channels: number,
    private readonly onWindow: (w: LevelWindow) => void,
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

  push(input: Float32Array[], frames: number): void {
    let at = 0;
    while (at < frames) {
      const n = Math.min(frames - at, this.windowEnd - this.position);
      let c = 0;
      if (this.channels >= 2) {
        // The first pair in one loop with Σx₀x₁: independent sums overlap, and the data is read once.
        this.accumulatePair(input[0], input[1], at, n);
        c = 2;
      }
      for (; c < this.channels; c++) this.accumulate(c, input[c], at, n);
      at += n;
      this.position += n;
      if (this.position === this.windowEnd) this.emit();
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
