/**
 * "Wrackline", Tidemark's colour map for levels: from the dark rust of wet wrack through kelp olive and sea
 * green to pale surf foam. The hue climbs from warm to cool as the level rises, the reverse of the usual
 * dark-cool → light-warm maps, so our pictures read as ours. Designed in OKLab: lightness rises linearly (order
 * survives greyscale and the colour-vision deficiencies, which keep lightness), chroma swells mid-way and is cut
 * to what sRGB can show, and the curve is resampled at equal OKLab distances so equal dB steps look equal.
 */
import { encodeSrgb8, isInSrgbGamut, oklabToLinearSrgb, type Oklab } from "./oklab.ts";

export const COLOUR_MAP_SIZE = 256;

const LIGHTNESS_START = 0.2;
const LIGHTNESS_END = 0.97;
/** OKLab hue angles: 50° is a rust brown, ≈ 110° olive, ≈ 150° green, ≈ 200° aqua; the end sits at 215°. */
const HUE_START_DEGREES = 50;
const HUE_TURN_DEGREES = 165;
/** Samples along the designed curve before equal-distance resampling. */
const CURVE_SAMPLES = 2048;

/** The designed curve at t ∈ [0, 1], chroma reduced until the colour fits sRGB. */
export function wracklineCurve(t: number): Oklab {
  const L = LIGHTNESS_START + (LIGHTNESS_END - LIGHTNESS_START) * t;
  const hue = ((HUE_START_DEGREES + HUE_TURN_DEGREES * t) * Math.PI) / 180;
  const wanted = 0.03 + 0.11 * Math.sin(Math.PI * t ** 0.8) + 0.01 * t;
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
export function wracklineColourMap(): Uint8Array {
  if (cached !== null) return cached;
  const points: Oklab[] = [];
  const distance = new Float64Array(CURVE_SAMPLES);
  for (let i = 0; i < CURVE_SAMPLES; i++) {
    points.push(wracklineCurve(i / (CURVE_SAMPLES - 1)));
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

/** "#rrggbb" of the map at fraction ∈ [0, 1] (clamped): 0 the quietest, 1 the loudest. */
export function wracklineHex(fraction: number): string {
  const map = wracklineColourMap();
  const f = Number.isFinite(fraction) ? Math.min(1, Math.max(0, fraction)) : 0;
  const e = 3 * Math.round(f * (COLOUR_MAP_SIZE - 1));
  return `#${[map[e], map[e + 1], map[e + 2]].map((v) => v.toString(16).padStart(2, "0")).join("")}`;
}

/** A CSS linear-gradient of the map (quietest at `from`), for legends: 17 stops are within 8-bit rounding of it. */
export function wracklineCssGradient(direction = "to right", stops = 17): string {
  const parts: string[] = [];
  for (let i = 0; i < stops; i++) {
    const f = i / (stops - 1);
    parts.push(`${wracklineHex(f)} ${(f * 100).toFixed(2).replace(/\.?0+$/, "")}%`);
  }
  return `linear-gradient(${direction}, ${parts.join(", ")})`;
}
