/**
 * Octave and one-third-octave bands on the base-ten system of IEC 61260-1:2014, and their levels
 * from a long-term spectrum. Clause numbers below are from memory; the formulas are the standard's.
 */

/** Octave frequency ratio of the base-ten system, G = 10^(3/10) (IEC 61260-1:2014, 5.2). */
export const OCTAVE_RATIO_BASE10 = 10 ** (3 / 10);
/** Reference frequency f_r = 1000 Hz (IEC 61260-1:2014, 5.3). */
export const REFERENCE_FREQUENCY_HZ = 1000;

/** Nominal series the report covers: 31.5 Hz … 16 kHz (issue #4), further limited by Nyquist. */
const LOWEST_NOMINAL_HZ = 31.5;
const HIGHEST_NOMINAL_HZ = 16000;

/** ISO 266 R10 preferred-number mantissas, to which IEC 61260-1 rounds its nominal mid-band frequencies. */
const R10_MANTISSAS = [1, 1.25, 1.6, 2, 2.5, 3.15, 4, 5, 6.3, 8, 10];

export interface Band {
  /** Nominal mid-band frequency for labels and the report (31.5, 40, …, 16000). */
  centerHz: number;
  /** Exact mid-band frequency f_m. */
  exactCenterHz: number;
  lowerHz: number;
  upperHz: number;
}

/**
 * Exact mid-band frequency of band x for 1/b-octave bands, b odd: f_m = f_r·G^(x/b)
 * (IEC 61260-1:2014, 5.4, eq. 2). Octaves (b = 1) and thirds (b = 3) are both odd.
 */
export function exactMidbandHz(x: number, bandsPerOctave: 1 | 3): number {
  return REFERENCE_FREQUENCY_HZ * OCTAVE_RATIO_BASE10 ** (x / bandsPerOctave);
}

/** Rounds an exact mid-band frequency to its nominal value (IEC 61260-1:2014, Annex E; ISO 266). */
export function nominalMidbandHz(exactHz: number): number {
  const decade = 10 ** Math.floor(Math.log10(exactHz));
  const mantissa = exactHz / decade;
  let best = R10_MANTISSAS[0];
  for (const m of R10_MANTISSAS) {
    if (Math.abs(Math.log(mantissa / m)) < Math.abs(Math.log(mantissa / best))) best = m;
  }
  // Rounding the product avoids 0.1 + 0.2-style tails such as 31.499999999999996.
  return Math.round(best * decade * 1000) / 1000;
}

/**
 * The bands of the 31.5 Hz … 16 kHz series whose exact mid-band frequency lies below Nyquist.
 * Band edges f_m·G^(∓1/(2b)) (IEC 61260-1:2014, 5.5); a top band that straddles Nyquist keeps its
 * nominal edges and is simply measured up to Nyquist, so 44.1 kHz files still report the 16 kHz octave.
 */
export function fractionalOctaveBands(bandsPerOctave: 1 | 3, sampleRateHz: number): Band[] {
  const nyquistHz = sampleRateHz / 2;
  const halfBand = OCTAVE_RATIO_BASE10 ** (1 / (2 * bandsPerOctave));
  const bands: Band[] = [];
  for (let x = -6 * bandsPerOctave; x <= 5 * bandsPerOctave; x++) {
    const exactCenterHz = exactMidbandHz(x, bandsPerOctave);
    const centerHz = nominalMidbandHz(exactCenterHz);
    if (centerHz < LOWEST_NOMINAL_HZ || centerHz > HIGHEST_NOMINAL_HZ || exactCenterHz >= nyquistHz) continue;
    bands.push({ centerHz, exactCenterHz, lowerHz: exactCenterHz / halfBand, upperHz: exactCenterHz * halfBand });
  }
  return bands;
}

/**
 * Precomputed bin weights for one band set over one spectrum layout: bin k covers
 * [(k − ½)·binHz, (k + ½)·binHz) and contributes the fraction of that span inside the band, so bands
 * narrower than a bin still get their share of a smooth spectrum.
 */
export interface BandWeights {
  bands: Band[];
  firstBin: Int32Array;
  /** weights[offset[i] + j] applies to bin firstBin[i] + j. */
  offset: Int32Array;
  count: Int32Array;
  weights: Float64Array;
}

export function createBandWeights(bands: Band[], binHz: number, binCount: number): BandWeights {
  const nyquistHz = (binCount - 1) * binHz;
  const firstBin = new Int32Array(bands.length);
  const offset = new Int32Array(bands.length);
  const count = new Int32Array(bands.length);
  const all: number[] = [];
  bands.forEach((band, i) => {
    const upperHz = Math.min(band.upperHz, nyquistHz);
    const k0 = Math.max(0, Math.floor(band.lowerHz / binHz + 0.5));
    const k1 = Math.min(binCount - 1, Math.floor(upperHz / binHz + 0.5));
    firstBin[i] = k0;
    offset[i] = all.length;
    for (let k = k0; k <= k1; k++) {
      const lo = Math.max(band.lowerHz, (k - 0.5) * binHz);
      const hi = Math.min(upperHz, (k + 0.5) * binHz);
      all.push(Math.max(0, hi - lo) / binHz);
    }
    // Bands past this spectrum's Nyquist (a decimated spectrum's) get no bins and read −Infinity.
    count[i] = Math.max(0, k1 - k0 + 1);
  });
  return { bands, firstBin, offset, count, weights: Float64Array.from(all) };
}

/**
 * Band levels in dB re full scale (mean square, so the bands of a broadband signal add up to its RMS
 * level and a full-scale sine in a band reads −3.01 dB), from a spectrum of mean-square shares per bin.
 * Writes `out[i]` for band i; −Infinity for an empty band.
 */
export function bandLevelsDb(meanSquarePerBin: Float64Array, w: BandWeights, out: Float64Array): void {
  for (let i = 0; i < w.bands.length; i++) {
    let sum = 0;
    const k0 = w.firstBin[i];
    const o = w.offset[i];
    for (let j = 0; j < w.count[i]; j++) sum += meanSquarePerBin[k0 + j] * w.weights[o + j];
    out[i] = 10 * Math.log10(sum);
  }
}
