/**
 * Mains hum: narrow peaks at 50 or 60 Hz and their harmonics standing above the local spectral floor.
 * Needs a fine long-term spectrum (≈ 1.5 Hz bins: 50 and 60 Hz lie 10 Hz apart and the tolerance is
 * ±1 Hz), which the spectral analyser takes from a few long frames of the ≈ 6 kHz decimated stream,
 * spread over the file.
 */
import type { LongTermSpectrum } from "./longTermSpectrum.ts";
import { interpolatePeakOffsetBins } from "./dominantFrequency.ts";

/** Mains frequencies in use worldwide (IEC 60038 lists 50 Hz and 60 Hz systems; from memory). */
export const MAINS_FREQUENCIES_HZ = [50, 60] as const;
/** A fundamental counts within ±2 % of the mains frequency (issue #4): grids hold far tighter, tape speed does not. */
export const HUM_FREQUENCY_TOLERANCE = 0.02;
/** Harmonics examined: up to the 10th (500/600 Hz), where buzz from rectifiers still shows (common practice). */
export const HUM_MAX_HARMONIC = 10;
/** Widest bin (Hz) that still parts 50 from 60 Hz: the Hann mainlobe (±2 bins; Harris 1978) stays within ±3 Hz. */
export const HUM_MAX_BIN_HZ = 1.5;
/** Harmonics are looked for within ±0.5 % (plus two bins) of h times the measured fundamental (common practice). */
const HARMONIC_TOLERANCE = 0.005;
/** The local floor is the median level within ±0.4·f0 of the peak (between hum lines, common practice)… */
const FLOOR_REACH_FRACTION = 0.4;
/** …leaving out the Hann mainlobe (±2 bins; Harris 1978) and one bin of margin. */
const MAINLOBE_GUARD_BINS = 3;

export interface HarmonicMeasure {
  harmonic: number;
  frequencyHz: number;
  /** Peak level minus the local floor, dB. */
  prominenceDb: number;
}

export interface HumEstimate {
  mainsHz: 50 | 60;
  /** Measured fundamental, Hz. */
  fundamentalHz: number;
  fundamentalProminenceDb: number;
  /** Harmonics (the fundamental is harmonic 1) standing at least prominenceDb above their floor. */
  prominentHarmonics: HarmonicMeasure[];
}

/** FFT size giving bins no wider than HUM_MAX_BIN_HZ at this rate. */
export function humFftSize(sampleRateHz: number): number {
  return 2 ** Math.ceil(Math.log2(sampleRateHz / HUM_MAX_BIN_HZ));
}

/**
 * Hum needs a prominent fundamental (a 440 Hz tone or a 100 Hz note has none at 50/60 Hz); the
 * harmonic count then tells hum from buzz. Harmonics are looked for at multiples of the measured
 * fundamental, so a tape running 2 % fast still lines up. When both mains frequencies qualify, the one
 * with more prominent harmonics wins (300 Hz is the 6th of 50 and the 5th of 60).
 */
export function detectHum(s: LongTermSpectrum, prominenceDb: number): HumEstimate | null {
  if (s.frames === 0) return null;
  let best: HumEstimate | null = null;
  for (const mainsHz of MAINS_FREQUENCIES_HZ) {
    const fundamental = measurePeak(s, 1, mainsHz, HUM_FREQUENCY_TOLERANCE * mainsHz, mainsHz);
    if (fundamental === null || !(fundamental.prominenceDb >= prominenceDb)) continue;
    const harmonics: HarmonicMeasure[] = [fundamental];
    for (let h = 2; h <= HUM_MAX_HARMONIC; h++) {
      const centreHz = h * fundamental.frequencyHz;
      const m = measurePeak(s, h, centreHz, HARMONIC_TOLERANCE * centreHz + 2 * s.binHz, mainsHz);
      if (m === null) break;
      if (m.prominenceDb >= prominenceDb) harmonics.push(m);
    }
    const candidate: HumEstimate = {
      mainsHz,
      fundamentalHz: fundamental.frequencyHz,
      fundamentalProminenceDb: fundamental.prominenceDb,
      prominentHarmonics: harmonics,
    };
    if (
      best === null ||
      harmonics.length > best.prominentHarmonics.length ||
      (harmonics.length === best.prominentHarmonics.length && fundamental.prominenceDb > best.fundamentalProminenceDb)
    ) {
      best = candidate;
    }
  }
  return best;
}

/**
 * The strongest bin within ±toleranceHz of centreHz, against the median level of the bins around it
 * (beyond its Hann mainlobe, within 0.4·f0). Null when that neighbourhood passes Nyquist.
 */
function measurePeak(
  s: LongTermSpectrum,
  harmonic: number,
  centreHz: number,
  toleranceHz: number,
  mainsHz: number,
): HarmonicMeasure | null {
  const p = s.amplitudeSquared;
  const floorReachBins = Math.ceil((FLOOR_REACH_FRACTION * mainsHz) / s.binHz);
  const from = Math.max(1, Math.round((centreHz - toleranceHz) / s.binHz));
  const to = Math.round((centreHz + toleranceHz) / s.binHz);
  if (to + 1 + floorReachBins >= s.binCount - 1) return null;
  // Search one bin beyond the tolerance on each side, so a slope running into it is seen as such.
  let k = Math.max(1, from - 1);
  for (let j = k + 1; j <= to + 1; j++) if (p[j] > p[k]) k = j;
  const frequencyHz = (k + interpolatePeakOffsetBins(p[k - 1], p[k], p[k + 1])) * s.binHz;

  const levels: number[] = [];
  for (let j = Math.max(1, k - floorReachBins); j <= k + floorReachBins; j++) {
    if (Math.abs(j - k) > MAINLOBE_GUARD_BINS) levels.push(10 * Math.log10(p[j]));
  }
  levels.sort((a, b) => a - b);
  const floorDb = levels[Math.floor(levels.length / 2)];
  const isPeak = k >= from && k <= to && p[k] >= p[k - 1] && p[k] >= p[k + 1];
  const prominenceDb = isPeak ? 10 * Math.log10(p[k]) - floorDb : -Infinity;
  return { harmonic, frequencyHz, prominenceDb: Number.isNaN(prominenceDb) ? -Infinity : prominenceDb };
}
