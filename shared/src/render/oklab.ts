/**
 * OKLab ↔ sRGB (Ottosson 2020, "A perceptual color space for image processing"; matrices as published
 * there, from memory and checked in tests/shared/colourMap.test.ts). sRGB transfer curve per
 * IEC 61966-2-1:1999.
 */

export interface Oklab {
  L: number;
  a: number;
  b: number;
}

/** Linear-light sRGB, each channel nominally 0 … 1 (outside means out of gamut). */
export interface LinearRgb {
  r: number;
  g: number;
  b: number;
}

export function oklabToLinearSrgb(c: Oklab): LinearRgb {
  const l = (c.L + 0.3963377774 * c.a + 0.2158037573 * c.b) ** 3;
  const m = (c.L - 0.1055613458 * c.a - 0.0638541728 * c.b) ** 3;
  const s = (c.L - 0.0894841775 * c.a - 1.291485548 * c.b) ** 3;
  return {
    r: 4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s,
    g: -1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s,
    b: -0.0041960863 * l - 0.7034186147 * m + 1.707614701 * s,
  };
}

export function linearSrgbToOklab(c: LinearRgb): Oklab {
  const l = Math.cbrt(0.4122214708 * c.r + 0.5363325363 * c.g + 0.0514459929 * c.b);
  const m = Math.cbrt(0.2119034982 * c.r + 0.6806995451 * c.g + 0.1073969566 * c.b);
  const s = Math.cbrt(0.0883024619 * c.r + 0.2817188376 * c.g + 0.6299787005 * c.b);
  return {
    L: 0.2104542553 * l + 0.793617785 * m - 0.0040720468 * s,
    a: 1.9779984951 * l - 2.428592205 * m + 0.4505937099 * s,
    b: 0.0259040371 * l + 0.7827717662 * m - 0.808675766 * s,
  };
}

/** Linear light → 8-bit sRGB code value (IEC 61966-2-1:1999, 5.2), clamped to 0 … 255. */
export function encodeSrgb8(linear: number): number {
  const x = Math.min(1, Math.max(0, linear));
  const v = x <= 0.0031308 ? 12.92 * x : 1.055 * x ** (1 / 2.4) - 0.055;
  return Math.round(v * 255);
}

export function isInSrgbGamut(c: LinearRgb, tolerance = 1e-6): boolean {
  return (
    c.r >= -tolerance && c.r <= 1 + tolerance && c.g >= -tolerance && c.g <= 1 + tolerance && c.b >= -tolerance && c.b <= 1 + tolerance
  );
}
