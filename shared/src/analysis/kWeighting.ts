/**
 * The K-weighting pre-filter of ITU-R BS.1770-4, Annex 1: a high-shelf ("stage 1", head effects) followed
 * by a high-pass ("stage 2", RLB curve). The standard tabulates coefficients for 48 kHz only; here both
 * biquads come from analog prototypes through the bilinear transform, so any sample rate gets them.
 * The prototype parameters below are a fit to the 48 kHz tables (from memory); the tests check that they
 * reproduce BS.1770-4 Tables 1 and 2 to 1e-6.
 */

/** Normalised biquad: y = b0 x + b1 x1 + b2 x2 − a1 y1 − a2 y2 (a0 = 1). */
export interface Biquad {
  b0: number;
  b1: number;
  b2: number;
  a1: number;
  a2: number;
}

/** Stage 1 prototype: shelf centre frequency (Hz), gain (dB) and quality factor. */
const SHELF_HZ = 1681.974450955533;
const SHELF_GAIN_DB = 3.999843853973347;
const SHELF_Q = 0.7071752369554196;
/** Exponent tying the shelf's band gain to its high-frequency gain in the fit. */
const SHELF_BAND_EXPONENT = 0.4996667741545416;
/** Stage 2 prototype: high-pass corner (Hz) and quality factor. */
const HIGHPASS_HZ = 38.13547087602444;
const HIGHPASS_Q = 0.5003270373238773;

export function kWeightingShelf(sampleRateHz: number): Biquad {
  const k = Math.tan((Math.PI * SHELF_HZ) / sampleRateHz);
  const vh = 10 ** (SHELF_GAIN_DB / 20);
  const vb = vh ** SHELF_BAND_EXPONENT;
  const a0 = 1 + k / SHELF_Q + k * k;
  return {
    b0: (vh + (vb * k) / SHELF_Q + k * k) / a0,
    b1: (2 * (k * k - vh)) / a0,
    b2: (vh - (vb * k) / SHELF_Q + k * k) / a0,
    a1: (2 * (k * k - 1)) / a0,
    a2: (1 - k / SHELF_Q + k * k) / a0,
  };
}

/** Stage 2; its numerator is 1, −2, 1 unnormalised, as BS.1770-4 Table 2 gives it. */
export function kWeightingHighPass(sampleRateHz: number): Biquad {
  const k = Math.tan((Math.PI * HIGHPASS_HZ) / sampleRateHz);
  const a0 = 1 + k / HIGHPASS_Q + k * k;
  return { b0: 1, b1: -2, b2: 1, a1: (2 * (k * k - 1)) / a0, a2: (1 - k / HIGHPASS_Q + k * k) / a0 };
}

/** |H(e^{jω})|² of a biquad at `frequencyHz` (for tests and plots). */
export function biquadPowerGain(f: Biquad, frequencyHz: number, sampleRateHz: number): number {
  const w = (2 * Math.PI * frequencyHz) / sampleRateHz;
  const c1 = Math.cos(w);
  const s1 = Math.sin(w);
  const c2 = Math.cos(2 * w);
  const s2 = Math.sin(2 * w);
  const nr = f.b0 + f.b1 * c1 + f.b2 * c2;
  const ni = -(f.b1 * s1 + f.b2 * s2);
  const dr = 1 + f.a1 * c1 + f.a2 * c2;
  const di = -(f.a1 * s1 + f.a2 * s2);
  return (nr * nr + ni * ni) / (dr * dr + di * di);
}
