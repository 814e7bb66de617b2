/**
 * Maximum over a sliding window of ±radius values, in a fixed number of Math.max per value whatever
 * the radius (van Herk 1992; Gil & Werman 1993): the row is cut into blocks of the window's length,
 * and a window's maximum is that of a suffix of one block and a prefix of the next. For the peak
 * picker (landmarks.ts), where a bin-by-bin scan of each neighbourhood took a mispredicted branch at
 * almost every comparison on noise-like spectra. Branch-free; the answer is always one of the inputs
 * (no arithmetic), so it holds exactly what a scan would find.
 */

export interface SlidingMax {
  readonly length: number;
  readonly radius: number;
  /**
   * out[outFrom + i] = max of x[xFrom + max(0, i − radius) … xFrom + min(length − 1, i + radius)] for
   * i in [0, length). Returns false if any of the `length` inputs is NaN: then the maxima are NaN
   * around it, which a caller comparing against them must not rely on.
   */
  apply(x: Float32Array, xFrom: number, out: Float32Array, outFrom: number): boolean;
}

export function createSlidingMax(length: number, radius: number): SlidingMax {
  if (!Number.isInteger(length) || length < 1 || !Number.isInteger(radius) || radius < 0) {
    throw new RangeError(`sliding max: need an integer length ≥ 1 and radius ≥ 0, got ${length} and ${radius}`);
  }
  const w = 2 * radius + 1;
  // The row sits `radius` into a buffer padded with −∞, so every window is exactly w long.
  const padded = Math.ceil((length + 2 * radius) / w) * w;
  const p = new Float32Array(padded).fill(Number.NEGATIVE_INFINITY);
  const prefix = new Float32Array(padded);
  const suffix = new Float32Array(padded);

  return {
    length,
    radius,
    apply(x, xFrom, out, outFrom) {
      if (xFrom < 0 || xFrom + length > x.length || outFrom < 0 || outFrom + length > out.length) {
        throw new RangeError(`sliding max: ${length} values from ${xFrom} of ${x.length} into ${outFrom} of ${out.length} do not fit`);
      }
      p.set(x.subarray(xFrom, xFrom + length), radius);
      let finite = true;
      for (let s = 0; s < padded; s += w) {
        const e = s + w - 1;
        let m = p[s];
        prefix[s] = m;
        for (let i = s + 1; i <= e; i++) {
          m = Math.max(m, p[i]);
          prefix[i] = m;
        }
        // Math.max spreads NaN, so a block holding one ends on NaN.
        if (m !== m) finite = false;
        m = p[e];
        suffix[e] = m;
        for (let i = e - 1; i >= s; i--) {
          m = Math.max(m, p[i]);
          suffix[i] = m;
        }
      }
      for (let i = 0; i < length; i++) out[outFrom + i] = Math.max(suffix[i], prefix[i + w - 1]);
      return finite;
    },
  };
}
