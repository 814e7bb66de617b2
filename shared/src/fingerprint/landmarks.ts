/**
 * Landmark extraction after "An Industrial-Strength Audio Search Algorithm" (Wang, 2003):
 * spectrogram peaks that dominate their time–frequency neighbourhood form a sparse constellation,
 * and pairs of peaks (anchor, target ahead of it) are hashed from (f1, f2 − f1, Δt).
 *
 * Density is bounded by a sliding-window rank: a peak is kept only if fewer than
 * `peaksPerWindow` stronger peaks lie within ±`rankRadiusFrames` of it. Any span of
 * rankRadiusFrames + 1 frames then holds at most peaksPerWindow kept peaks (the weakest of them
 * would otherwise see that many stronger ones), whatever the content, and the decision depends on
 * the audio around a peak only, not on where the file starts. Only comparisons of values are made,
 * so any monotonic scale works (power or dB), and a gain change, which scales every power alike,
 * picks the same peaks.
 */

import { createPeakRowsSimd } from "./peakRowsSimd.ts";
import { createSlidingMax } from "./slidingMax.ts";

export interface PeakPickerParams {
  /** Spectrum values per frame (the band's bins). */
  bins: number;
  /** A peak is the maximum of ±freqRadiusBins × ±timeRadiusFrames around it. */
  freqRadiusBins: number;
  timeRadiusFrames: number;
  /** Values below this (the spectrum's own units) are never peaks: digital silence and the last bits of dither. */
  floor: number;
  peaksPerWindow: number;
  rankRadiusFrames: number;
}

/** Kept peaks in time order (frame, then strength). */
export interface PeakList {
  frames: Int32Array;
  bins: Int32Array;
  count: number;
}

export interface PeakPicker {
  /** Feeds the next frame's spectrum (`params.bins` values); copied, so it may be reused. */
  pushFrame(spectrum: Float32Array): void;
  finish(): PeakList;
}

export interface PeakPickerOptions {
  /** Row maxima and candidate bins in WebAssembly SIMD where available (default true); same peaks. */
  simd?: boolean;
}

export function createPeakPicker(params: PeakPickerParams, options: PeakPickerOptions = {}): PeakPicker {
  const { bins, freqRadiusBins: df, timeRadiusFrames: dt, floor, peaksPerWindow, rankRadiusFrames } = params;
  for (const [name, v] of Object.entries({ bins, df, dt, peaksPerWindow, rankRadiusFrames })) {
    if (!Number.isInteger(v) || v < (name === "bins" || name === "peaksPerWindow" ? 1 : 0)) {
      throw new RangeError(`peak picker: ${name} must be a non-negative integer (bins, peaksPerWindow ≥ 1), got ${v}`);
    }
  }
  const depth = 2 * dt + 1;
  // Each row's ±df maximum, made once when the row arrives (it serves depth frames), and whether the
  // row holds a NaN: a neighbourhood with one goes through isLocalMax, whose comparisons define NaN's fate.
  const simd = options.simd === false ? null : createPeakRowsSimd(bins, depth, df);
  const rows = simd ? simd.rows : new Float32Array(depth * bins);
  const rowMax = simd ? simd.rowMax : new Float32Array(depth * bins);
  const rowFinite = new Uint8Array(depth);
  const slidingMax = simd ? null : createSlidingMax(bins, df);
  let framesIn = 0;

  // Per-frame top-N scratch (sorted strongest first). A peak kept by the window rank is also in
  // the top N of its own frame, so nothing is lost by trimming each frame to N first.
  const frameBins = new Int32Array(peaksPerWindow);
  const frameValues = new Float32Array(peaksPerWindow);

  // Candidates waiting for their ±rankRadiusFrames window to be complete (a ring).
  const capacity = (2 * rankRadiusFrames + 2 * dt + 4) * peaksPerWindow;
  const candFrame = new Int32Array(capacity);
  const candBin = new Int32Array(capacity);
  const candValue = new Float32Array(capacity);
  let head = 0; // oldest candidate still needed as a competitor
  let next = 0; // oldest undecided candidate
  let tail = 0; // one past the newest

  let outFrames = new Int32Array(1024);
  let outBins = new Int32Array(1024);
  let outCount = 0;
  let finished = false;

  function keep(frame: number, bin: number): void {
    if (outCount === outFrames.length) {
      const f = new Int32Array(2 * outFrames.length);
      f.set(outFrames);
      outFrames = f;
      const b = new Int32Array(2 * outBins.length);
      b.set(outBins);
      outBins = b;
    }
    outFrames[outCount] = frame;
    outBins[outCount] = bin;
    outCount++;
  }

  /** Is (frame k, bin b) the neighbourhood maximum? Ties go to the earlier (frame, bin). */
  function isLocalMax(k: number, b: number, v: number, lastFrame: number): boolean {
    const bLo = Math.max(0, b - df);
    const bHi = Math.min(bins - 1, b + df);
    const own = (k % depth) * bins;
    // Own row first: it rejects most bins after a comparison or two.
    for (let c = bLo; c <= bHi; c++) {
      const s = rows[own + c];
      if (s > v || (s === v && c < b)) return false;
    }
    const jLo = Math.max(0, k - dt);
    const jHi = Math.min(lastFrame, k + dt);
    for (let j = jLo; j <= jHi; j++) {
      if (j === k) continue;
      const row = (j % depth) * bins;
      for (let c = bLo; c <= bHi; c++) {
        const s = rows[row + c];
        if (s > v || (s === v && j < k)) return false;
      }
    }
    return true;
  }

  /**
   * isLocalMax's answer from the row maxima, for neighbourhoods without NaN. A bin below its own row's
   * maximum has a greater value beside it; at the maximum, only an equal value at a lower bin of the
   * own row, or an equal maximum in an earlier row, or a greater one in any row, beats it.
   */
  function isLocalMaxByRows(k: number, b: number, v: number, lastFrame: number): boolean {
    const own = (k % depth) * bins;
    for (let c = Math.max(0, b - df); c < b; c++) if (rows[own + c] === v) return false;
    const jLo = Math.max(0, k - dt);
    const jHi = Math.min(lastFrame, k + dt);
    for (let j = jLo; j <= jHi; j++) {
      if (j === k) continue;
      const m = rowMax[(j % depth) * bins + b];
      if (m > v || (m === v && j < k)) return false;
    }
    return true;
  }

  /** Inserts a peak into the frame's sorted top N of `n` (strongest first, lower bin on ties by scan order); returns the new n. */
  function rankInFrame(b: number, v: number, n: number): number {
    if (n === peaksPerWindow && v <= frameValues[n - 1]) return n;
    let i = n < peaksPerWindow ? n++ : n - 1;
    while (i > 0 && frameValues[i - 1] < v) {
      frameValues[i] = frameValues[i - 1];
      frameBins[i] = frameBins[i - 1];
      i--;
    }
    frameValues[i] = v;
    frameBins[i] = b;
    return n;
  }

  function evaluateFrame(k: number, lastFrame: number): void {
    const own = (k % depth) * bins;
    let finite = true;
    for (let j = Math.max(0, k - dt); j <= Math.min(lastFrame, k + dt); j++) if (rowFinite[j % depth] === 0) finite = false;
    let n = 0;
    if (finite && simd) {
      // The bins at their own row's maximum and above the floor, in increasing order, as the scan below finds them.
      const count = simd.candidates(own, floor);
      const found = simd.candidateBins;
      for (let i = 0; i < count; i++) {
        const b = found[i];
        const v = rows[own + b];
        if (isLocalMaxByRows(k, b, v, lastFrame)) n = rankInFrame(b, v, n);
      }
    } else {
      for (let b = 0; b < bins; b++) {
        const v = rows[own + b];
        if (finite) {
          // Most bins leave here: one predictable comparison instead of a scan of their neighbourhood.
          if (v !== rowMax[own + b] || v < floor || !isLocalMaxByRows(k, b, v, lastFrame)) continue;
        } else if (v < floor || !isLocalMax(k, b, v, lastFrame)) continue;
        n = rankInFrame(b, v, n);
      }
    }
    if (tail + n - head > capacity) throw new Error("peak picker: candidate ring overflow (internal error)");
    for (let i = 0; i < n; i++) {
      const slot = tail % capacity;
      candFrame[slot] = k;
      candBin[slot] = frameBins[i];
      candValue[slot] = frameValues[i];
      tail++;
    }
  }

  /** Decides every candidate whose rank window ends at or before `lastFrame`. */
  function decide(lastFrame: number): void {
    while (next < tail) {
      const s = next % capacity;
      const f = candFrame[s];
      if (f + rankRadiusFrames > lastFrame) break;
      while (candFrame[head % capacity] < f - rankRadiusFrames) head++;
      const v = candValue[s];
      const b = candBin[s];
      let stronger = 0;
      for (let i = head; i < tail && stronger < peaksPerWindow; i++) {
        const t = i % capacity;
        const g = candFrame[t];
        if (g > f + rankRadiusFrames) break;
        const w = candValue[t];
        if (w > v || (w === v && (g < f || (g === f && candBin[t] < b)))) stronger++;
      }
      if (stronger < peaksPerWindow) keep(f, b);
      next++;
    }
  }

  return {
    pushFrame(spectrum) {
      if (finished) throw new Error("peak picker: pushFrame after finish()");
      if (spectrum.length < bins) throw new RangeError(`peak picker: frame needs ${bins} values, got ${spectrum.length}`);
      const k = framesIn++;
      const at = (k % depth) * bins;
      rows.set(spectrum.subarray(0, bins), at);
      const finite = simd ? simd.updateMax(at) : slidingMax!.apply(rows, at, rowMax, at);
      rowFinite[k % depth] = finite ? 1 : 0;
      const ready = k - dt;
      if (ready >= 0) {
        evaluateFrame(ready, k);
        decide(ready);
      }
    },
    finish() {
      if (!finished) {
        finished = true;
        const last = framesIn - 1;
        for (let k = Math.max(0, framesIn - dt); k <= last; k++) evaluateFrame(k, last);
        decide(Number.POSITIVE_INFINITY);
      }
      return { frames: outFrames.subarray(0, outCount), bins: outBins.subarray(0, outCount), count: outCount };
    },
  };
}

export interface LandmarkParams {
  /** Targets paired with each anchor, nearest in time first. */
  fanOut: number;
  /** Target zone: frames ahead of the anchor, inclusive (minDeltaFrames ≥ 1 skips same-frame pairs). */
  minDeltaFrames: number;
  maxDeltaFrames: number;
  /** Largest |f2 − f1| in bins. */
  maxDeltaBins: number;
}

export interface Landmarks {
  hashes: Uint32Array;
  /** Anchor frame of each hash, in time order. */
  anchorFrames: Int32Array;
}

/** Hash layout: f1 in bits 16–24, (f2 − f1 + 512) in bits 6–15, Δt in bits 0–5. */
export const HASH_F1_BITS = 9;
export const HASH_DELTA_T_BITS = 6;

export function packLandmarkHash(anchorBin: number, deltaBins: number, deltaFrames: number): number {
  return ((anchorBin << 16) | ((deltaBins + 512) << 6) | deltaFrames) >>> 0;
}

export function unpackLandmarkHash(hash: number): { anchorBin: number; deltaBins: number; deltaFrames: number } {
  return { anchorBin: hash >>> 16, deltaBins: ((hash >>> 6) & 0x3ff) - 512, deltaFrames: hash & 0x3f };
}

/**
 * Pairs each peak (anchor) with up to `fanOut` peaks in its target zone and hashes each pair.
 * Pure: the fingerprinter calls it on its kept peaks, tests call it on synthetic constellations.
 */
export function hashLandmarks(peaks: PeakList, p: LandmarkParams): Landmarks {
  if (p.maxDeltaFrames >= 1 << HASH_DELTA_T_BITS || p.minDeltaFrames < 1 || p.maxDeltaFrames < p.minDeltaFrames) {
    throw new RangeError(`target zone must satisfy 1 ≤ minDeltaFrames ≤ maxDeltaFrames < 64, got ${p.minDeltaFrames}..${p.maxDeltaFrames}`);
  }
  if (p.maxDeltaBins > 511) throw new RangeError(`maxDeltaBins must be ≤ 511, got ${p.maxDeltaBins}`);
  const { frames, bins, count } = peaks;
  const hashes = new Uint32Array(count * p.fanOut);
  const anchorFrames = new Int32Array(count * p.fanOut);
  let n = 0;
  for (let i = 0; i < count; i++) {
    const f1 = bins[i];
    if (f1 < 0 || f1 >= 1 << HASH_F1_BITS) throw new RangeError(`peak bin must be in [0, 512), got ${f1}`);
    const t1 = frames[i];
    if (i > 0 && t1 < frames[i - 1]) throw new RangeError(`peaks must be in time order: frame ${t1} after ${frames[i - 1]}`);
    let paired = 0;
    for (let j = i + 1; j < count && paired < p.fanOut; j++) {
      const dtFrames = frames[j] - t1;
      if (dtFrames > p.maxDeltaFrames) break;
      if (dtFrames < p.minDeltaFrames) continue;
      const dBins = bins[j] - f1;
      if (dBins > p.maxDeltaBins || dBins < -p.maxDeltaBins) continue;
      hashes[n] = packLandmarkHash(f1, dBins, dtFrames);
      anchorFrames[n] = t1;
      n++;
      paired++;
    }
  }
  return { hashes: hashes.slice(0, n), anchorFrames: anchorFrames.slice(0, n) };
}
