/**
 * Fixed time grids over absolute frame indices (100 ms loudness sub-blocks, 50 ms level windows).
 * Boundaries depend only on the frame index, never on how the stream was cut into blocks, so results
 * are the same for any block size. Rates whose period is not a whole number of frames (11025 Hz at
 * 100 ms) get boundaries rounded to the nearest frame.
 */
export class FrameGrid {
  constructor(
    private readonly sampleRateHz: number,
    readonly periodSeconds: number,
  ) {}

  /** First frame of cell `index`. */
  boundary(index: number): number {
    return Math.round(index * this.periodSeconds * this.sampleRateHz);
  }

  /** Index of the cell holding `frame`. */
  cellOf(frame: number): number {
    let k = Math.floor(frame / (this.periodSeconds * this.sampleRateHz));
    while (this.boundary(k + 1) <= frame) k++;
    while (k > 0 && this.boundary(k) > frame) k--;
    return k;
  }
}

/** A growable Float64Array for per-window series whose count depends on the file length. */
export class Float64Series {
  private data = new Float64Array(1024);
  length = 0;

  push(value: number): void {
    if (this.length === this.data.length) {
      const grown = new Float64Array(this.data.length * 2);
      grown.set(this.data);
      this.data = grown;
    }
    this.data[this.length++] = value;
  }

  values(): Float64Array {
    return this.data.subarray(0, this.length);
  }
}
