/**
 * Audio bandwidth from a long-term spectrum, and the shelf that betrays a lossy or lower-rate origin.
 *
 * A "shelf" is a cliff: the spectrum falls by at least `thresholdDb` within 1/6 octave and stays down
 * up to Nyquist. Natural roll-offs (microphones, tape, analogue filters: at most ~48 dB/octave, i.e.
 * 8 dB per 1/6 octave; common practice) never qualify, while lossy encoders' low-pass filters and
 * resamplers' anti-imaging filters (transition bands of a few percent) always do.
 */
import type { LongTermSpectrum } from "./longTermSpectrum.ts";
import { medianSmoothKernel } from "./medianKernels.ts";

/** Bins below this power count as −200 dB: far under 32-bit float rounding (≈ −150 dB re FS), so digital silence is a finite floor. */
const FLOOR_POWER = 1e-20;
/** The drop must happen within this span above the edge (1/6 octave; see the module comment). */
const SHELF_GAP_OCTAVES = 1 / 6;
/** The in-band reference is the mean level over this span below the edge; tones are too narrow to hold it up. */
const REFERENCE_SPAN_OCTAVES = 1 / 3;
/** Median smoothing over ±1/96 octave (at least ±4 bins) removes isolated tones such as a 19 kHz FM pilot. */
const SMOOTHING_OCTAVES = 1 / 48;
/** At least this share of the bins, just under Nyquist, must remain above a candidate's gap as "floor". */
const MIN_FLOOR_FRACTION = 0.01;

/** A shelf below this fraction of Nyquist is "well below" it: lossy origin suspected (common practice). */
export const BAND_LIMITED_MAX_FRACTION_OF_NYQUIST = 0.85;
/**
 * Standard rates whose Nyquist frequency betrays upsampling (AES5-2018 and IASA TC-04 rates).
 * 32 kHz is left out on purpose: its 16 kHz shelf is also where lossy encoders low-pass, and calling
 * that `band-limited` is the safer reading.
 */
export const STANDARD_SAMPLE_RATES_HZ = [44100, 48000, 88200, 96000, 176400, 192000] as const;
/**
 * A resampler's edge (the −40 dB point) sits just under the old Nyquist: 95 % … 101 % of it. Measured:
 * sox `rate -h` 44.1 → 48 kHz puts it at 98.5 %; a lossy encoder's low-pass sits lower — LAME at 320 kbit/s
 * and 48 kHz at 20.54 kHz, 93 % of 22.05 kHz — and must not read as upsampled (tests/shared/bandwidth.test.ts).
 */
const UPSAMPLED_EDGE_MIN_FRACTION = 0.95;
const UPSAMPLED_EDGE_MAX_FRACTION = 1.01;
/**
 * Upsampled also needs the band above the edge empty to the noise floor: the smoothed spectrum there may
 * rise at most this far above its own median (a resampler leaves a flat floor; common practice).
 */
const UPSAMPLED_MAX_FLOOR_SPREAD_DB = 12;
/**
 * At 44.1 and 48 kHz, lossy encoders low-pass between about 15 and 20.5 kHz (common practice); with the
 * −40 dB point a little above the nominal cut-off, a shelf from 15 kHz up to the upsampled range is lossy.
 */
const LOSSY_EDGE_MIN_HZ = 15000;
const LOSSY_RATES_HZ = [44100, 48000];

export interface BandwidthEstimate {
  /** Highest frequency within `thresholdDb` of the in-band level below the shelf; Nyquist when there is no shelf. */
  bandwidthHz: number;
  hasShelf: boolean;
  /** In-band level (dB, mean over 1/3 octave below the edge) minus the highest level above the gap. */
  shelfDepthDb: number;
  /** Above the gap: the highest smoothed level minus the median, dB (0 without a shelf). Small when empty to the floor. */
  floorSpreadDb?: number;
}

export type BandwidthVerdict =
  | { code: "upsampled"; fromSampleRateHz: number }
  | { code: "band-limited" }
  | null;

/**
 * Estimates the bandwidth; null for a silent spectrum. Allocates a few arrays of binCount: it runs once
 * per file and channel, at finish.
 */
export function estimateBandwidth(s: LongTermSpectrum, thresholdDb: number): BandwidthEstimate | null {
  if (s.frames === 0) return null;
  const n = s.binCount;
  const top = n - 2; // the Nyquist bin is half a bin wide and often odd: leave it out
  const levelDb = new Float64Array(n);
  let isSilent = true;
  for (let k = 0; k < n; k++) {
    if (s.amplitudeSquared[k] > 0) isSilent = false;
    levelDb[k] = 10 * Math.log10(Math.max(FLOOR_POWER, s.amplitudeSquared[k]));
  }
  if (isSilent) return null;
  const nyquistHz = (n - 1) * s.binHz;

  const smoothed = medianSmooth(levelDb, top);
  // suffixMax[k] = max of smoothed over [k, top]
  const suffixMax = new Float64Array(n + 1).fill(-Infinity);
  for (let k = top; k >= 0; k--) suffixMax[k] = Math.max(smoothed[k], suffixMax[k + 1]);
  const prefixSum = new Float64Array(n + 1);
  for (let k = 0; k < n; k++) prefixSum[k + 1] = prefixSum[k] + smoothed[k];
  const meanOver = (lo: number, hi: number): number => (prefixSum[hi + 1] - prefixSum[lo]) / (hi - lo + 1);

  const gapRatio = 2 ** SHELF_GAP_OCTAVES;
  const referenceRatio = 2 ** REFERENCE_SPAN_OCTAVES;
  const minFloorBins = Math.max(4, Math.ceil(MIN_FLOOR_FRACTION * n));
  // The reference span must hold a few bins; below that the spectrum is too coarse to judge.
  const firstCandidate = Math.ceil(4 / (1 - 1 / referenceRatio));
  let edgeBin = -1;
  let gapBin = -1;
  let depthDb = 0;
  for (let k = firstCandidate; k < top - minFloorBins; k++) {
    const g = Math.min(Math.ceil(k * gapRatio), top - minFloorBins);
    const beyondDb = suffixMax[g];
    const referenceDb = meanOver(Math.floor(k / referenceRatio), k);
    if (smoothed[k] - beyondDb >= thresholdDb && referenceDb - beyondDb >= thresholdDb) {
      edgeBin = k;
      gapBin = g;
      depthDb = referenceDb - beyondDb;
    }
  }
  if (edgeBin < 0) return { bandwidthHz: nyquistHz, hasShelf: false, shelfDepthDb: 0, floorSpreadDb: 0 };
  const above = smoothed.slice(gapBin, top + 1).sort();
  const floorSpreadDb = above.length > 0 ? above[above.length - 1] - above[(above.length - 1) >> 1] : 0;

  // The edge itself: the highest frequency still within thresholdDb of the in-band reference.
  const referenceDb = meanOver(Math.floor(edgeBin / referenceRatio), edgeBin);
  const limitDb = referenceDb - thresholdDb;
  let j = gapBin;
  while (j > 0 && smoothed[j] < limitDb) j--;
  // Linear interpolation of the crossing between bins j (above the limit) and j + 1 (below it).
  const levelAbove = smoothed[j];
  const levelBelow = smoothed[j + 1];
  const fraction = levelAbove > levelBelow ? (levelAbove - limitDb) / (levelAbove - levelBelow) : 0;
  return { bandwidthHz: (j + fraction) * s.binHz, hasShelf: true, shelfDepthDb: depthDb, floorSpreadDb };
}

/**
 * Decides whether a shelf means `upsampled` or `band-limited`. Upsampled: the edge sits at 95–101 % of a
 * lower standard rate's Nyquist and the band above it is empty to the noise floor. Band-limited (lossy
 * origin suspected): any other shelf below 85 % of Nyquist, or at 44.1/48 kHz a shelf from 15 kHz up to
 * the upsampled range (an encoder's steep low-pass).
 */
export function judgeBandwidth(estimate: BandwidthEstimate, sampleRateHz: number): BandwidthVerdict {
  if (!estimate.hasShelf) return null;
  const edgeHz = estimate.bandwidthHz;
  const isEmptyAbove = (estimate.floorSpreadDb ?? 0) <= UPSAMPLED_MAX_FLOOR_SPREAD_DB;
  for (const rateHz of STANDARD_SAMPLE_RATES_HZ) {
    if (rateHz >= sampleRateHz) break;
    const lowerNyquistHz = rateHz / 2;
    if (isEmptyAbove && edgeHz >= UPSAMPLED_EDGE_MIN_FRACTION * lowerNyquistHz && edgeHz <= UPSAMPLED_EDGE_MAX_FRACTION * lowerNyquistHz) {
      return { code: "upsampled", fromSampleRateHz: rateHz };
    }
  }
  if (edgeHz < BAND_LIMITED_MAX_FRACTION_OF_NYQUIST * (sampleRateHz / 2)) return { code: "band-limited" };
  if (LOSSY_RATES_HZ.includes(sampleRateHz) && edgeHz >= LOSSY_EDGE_MIN_HZ && edgeHz < UPSAMPLED_EDGE_MIN_FRACTION * 22050) return { code: "band-limited" };
  return null;
}

/** Half-width of medianSmooth's window at bin k: ±1/96 octave, at least 4 and at most 32 bins. */
function smoothingHalfWidth(k: number): number {
  return Math.min(32, Math.max(4, Math.round(k * SMOOTHING_WIDEN)));
}
const SMOOTHING_WIDEN = 2 ** (SMOOTHING_OCTAVES / 2) - 1;

/**
 * Running median of levelDb over [0, top] with a window that widens with frequency (log-spaced smoothing):
 * bin k's median is over [k − h, k + h] clipped to [0, top], h = smoothingHalfWidth(k). Both window ends
 * only move up with k (h grows by at most one a bin), so one sorted copy of the window is kept: each bin
 * takes in the values entering at the top and lets go of those leaving at the bottom, instead of sorting
 * 9 … 65 values afresh (issue #22: three calls a file were a twentieth of a 1 s file's time). The medians
 * are the same values as sorting each window (tests/shared/bandwidth.test.ts). A spectrum holding NaN
 * takes the sorting path, whose built-in sort puts NaN last.
 */
export function medianSmooth(levelDb: Float64Array, top: number, kernels: "auto" | "js" = "auto"): Float64Array {
  for (let k = 0; k <= top; k++) if (levelDb[k] !== levelDb[k]) return medianSmoothSorting(levelDb, top);
  // The same loop in medianKernels.wat where WebAssembly is (issue #22: a short file's few calls ran it
  // unoptimised, then paid for optimising it twice).
  const fromKernel = kernels === "auto" ? medianSmoothKernel(levelDb, top, SMOOTHING_WIDEN) : null;
  if (fromKernel) return fromKernel;
  const out = new Float64Array(levelDb.length);
  out.set(levelDb);
  const sorted = new Float64Array(2 * 32 + 1);
  let count = 0;
  let lo = 0;
  let hi = -1;
  for (let k = 0; k <= top; k++) {
    const half = smoothingHalfWidth(k);
    const wantLo = Math.max(0, k - half);
    const wantHi = Math.min(top, k + half);
    for (; lo < wantLo; lo++) {
      // Remove one copy of levelDb[lo]: the first index not below it holds it.
      const v = levelDb[lo];
      let a = 0;
      let b = count;
      while (a < b) {
        const m = (a + b) >> 1;
        if (sorted[m] < v) a = m + 1;
        else b = m;
      }
      // Plain loops: copyWithin's call costs more than moving a few values.
      for (let i = a + 1; i < count; i++) sorted[i - 1] = sorted[i];
      count--;
    }
    while (hi < wantHi) {
      // Insert levelDb[hi + 1] after any equal values.
      const v = levelDb[++hi];
      let a = 0;
      let b = count;
      while (a < b) {
        const m = (a + b) >> 1;
        if (sorted[m] <= v) a = m + 1;
        else b = m;
      }
      for (let i = count; i > a; i--) sorted[i] = sorted[i - 1];
      sorted[a] = v;
      count++;
    }
    out[k] = count % 2 === 1 ? sorted[(count - 1) / 2] : 0.5 * (sorted[count / 2 - 1] + sorted[count / 2]);
  }
  return out;
}

/** medianSmooth by sorting each window afresh: for spectra holding NaN. */
function medianSmoothSorting(levelDb: Float64Array, top: number): Float64Array {
  const out = new Float64Array(levelDb.length);
  out.set(levelDb);
  for (let k = 0; k <= top; k++) {
    const half = smoothingHalfWidth(k);
    const window = levelDb.slice(Math.max(0, k - half), Math.min(top, k + half) + 1).sort();
    const count = window.length;
    out[k] = count % 2 === 1 ? window[(count - 1) / 2] : 0.5 * (window[count / 2 - 1] + window[count / 2]);
  }
  return out;
}
