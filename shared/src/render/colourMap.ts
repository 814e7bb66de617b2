/**
 * "Dusk", Tidemark's spectrogram colour map: night indigo → violet → rose → ember → amber → pale dawn.
 * Designed in OKLab: lightness rises linearly (so order reads even in greyscale and for colour-blind
 * readers), the hue turns 185° through the warm side, chroma swells mid-way and is cut to what sRGB can
 * show, and the curve is then resampled at equal OKLab distances so equal dB steps look equal.
 */
import { encodeSrgb8, isInSrgbGamut, oklabToLinearSrgb, type Oklab } from "./oklab.ts";

export const COLOUR_MAP_SIZE = 256;

const LIGHTNESS_START = 0.14;
const LIGHTNESS_END = 0.97;
const HUE_START_DEGREES = 285;
const HUE_TURN_DEGREES = 185;
/** Samples along the designed curve before equal-distance resampling. */
const CURVE_SAMPLES = 2048;

/** The designed curve at t ∈ [0, 1], chroma reduced until the colour fits sRGB. */
export function duskCurve(t: number): Oklab {
  const L = LIGHTNESS_START + (LIGHTNESS_END - LIGHTNESS_START) * t;
  const hue = ((HUE_START_DEGREES + HUE_TURN_DEGREES * t) * Math.PI) / 180;
  const wanted = 0.04 + 0.15 * Math.sin(Math.PI * t ** 0.9) + 0.03 * t;
  let lo = 0;
  let hi = wanted;
  const at = (c: number): Oklab => ({ L, a: c * Math.cos(hue), b: c * Math.sin(hue) });
  if (isInSrgbGamut(oklabToLinearSrgb(at(hi)))) return at(hi);
  for (let i = 0; i < 30; i++) {
    const mid = 0.5 * (lo + hi);
    if (isInSrgbGamut(oklabToLinearSrgb(at(mid)))) lo = mid;
    else hi = mid;
  }
  return at(lo);
}

let cached: Uint8Array | null = null;

/** COLOUR_MAP_SIZE entries of [r, g, b] (8-bit sRGB), from the quietest to the loudest. */
export function duskColourMap(): Uint8Array {
  if (cached !== null) return cached;
  const points: Oklab[] = [];
  const distance = new Float64Array(CURVE_SAMPLES);
  for (let i = 0; i < CURVE_SAMPLES; i++) {
    points.push(duskCurve(i / (CURVE_SAMPLES - 1)));
    if (i > 0) {
      const p = points[i - 1];
      const q = points[i];
      distance[i] = distance[i - 1] + Math.hypot(q.L - p.L, q.a - p.a, q.b - p.b);
    }
  }
  const total = distance[CURVE_SAMPLES - 1];
  const map = new Uint8Array(COLOUR_MAP_SIZE * 3);
  let j = 0;
  for (let e = 0; e < COLOUR_MAP_SIZE; e++) {
    const target = (total * e) / (COLOUR_MAP_SIZE - 1);
    while (j < CURVE_SAMPLES - 2 && distance[j + 1] < target) j++;
    const span = distance[j + 1] - distance[j];
    const f = span > 0 ? Math.min(1, Math.max(0, (target - distance[j]) / span)) : 0;
    const p = points[j];
    const q = points[j + 1];
    const rgb = oklabToLinearSrgb({ L: p.L + (q.L - p.L) * f, a: p.a + (q.a - p.a) * f, b: p.b + (q.b - p.b) * f });
    map[3 * e] = encodeSrgb8(rgb.r);
    map[3 * e + 1] = encodeSrgb8(rgb.g);
    map[3 * e + 2] = encodeSrgb8(rgb.b);
  }
  cached = map;
  return map;
}
