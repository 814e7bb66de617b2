/**
 * Strongest spectral peak of a long-term spectrum, refined between bins.
 */
import type { LongTermSpectrum } from "./longTermSpectrum.ts";

/**
 * Offset in bins (−½ … ½) of the true peak from bin k, by fitting a parabola through the log powers of
 * bins k−1, k, k+1 ("Gaussian" interpolation: exact for a Gaussian mainlobe, and within a few
 * hundredths of a bin for Hann; common practice, from memory).
 */
export function interpolatePeakOffsetBins(powerBelow: number, powerAt: number, powerAbove: number): number {
  const a = Math.log(powerBelow);
  const b = Math.log(powerAt);
  const c = Math.log(powerAbove);
  const curvature = a - 2 * b + c;
  if (!Number.isFinite(curvature) || curvature >= 0) return 0;
  return Math.max(-0.5, Math.min(0.5, (0.5 * (a - c)) / curvature));
}

/** Subsonic drift and rumble are not a recording's "dominant frequency": the search starts at 20 Hz (common practice). */
export const AUDIO_BAND_LOW_HZ = 20;

/** Index of the largest local maximum over bins [fromBin, toBin) (−1 if the spectrum has none). */
export function strongestPeakBin(power: Float64Array, fromBin: number, toBin: number): number {
  let best = -1;
  let bestPower = 0;
  const lo = Math.max(1, fromBin);
  const hi = Math.min(power.length - 1, toBin);
  for (let k = lo; k < hi; k++) {
    const p = power[k];
    // A local maximum, so the skirt of a DC offset (bin 1 below bin 0) never counts as a peak.
    if (p > bestPower && p >= power[k - 1] && p >= power[k + 1]) {
      best = k;
      bestPower = p;
    }
  }
  return best;
}

/**
 * Frequency of the strongest peak, Hz, or null for silence. When a finer spectrum of the same signal is
 * given (the decimated stream's long frames) and the peak lies below `fineBelowHz`, the peak is
 * re-found there within ±1 coarse bin and refined at that resolution; the coarse estimate stands if the
 * fine one has no peak inside that window.
 */
export function dominantFrequencyHz(coarse: LongTermSpectrum, fine: LongTermSpectrum | null, fineBelowHz = Infinity): number | null {
  const p = coarse.amplitudeSquared;
  const k = strongestPeakBin(p, Math.ceil(AUDIO_BAND_LOW_HZ / coarse.binHz), coarse.binCount - 1);
  if (k < 0) return null;
  const coarseHz = (k + interpolatePeakOffsetBins(p[k - 1], p[k], p[k + 1])) * coarse.binHz;
  if (fine === null || fine.frames === 0 || coarseHz >= fineBelowHz) return coarseHz;
  const q = fine.amplitudeSquared;
  const from = Math.max(Math.ceil(AUDIO_BAND_LOW_HZ / fine.binHz), Math.floor(((k - 1) * coarse.binHz) / fine.binHz));
  const to = Math.ceil(((k + 1) * coarse.binHz) / fine.binHz) + 1;
  const j = strongestPeakBin(q, from, Math.min(to, fine.binCount - 1));
  if (j <= from || j >= to - 1) return coarseHz;
  return (j + interpolatePeakOffsetBins(q[j - 1], q[j], q[j + 1])) * fine.binHz;
}
