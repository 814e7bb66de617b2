import { describe, expect, it } from "vitest";
import { COLOUR_MAP_SIZE, duskColourMap } from "../../shared/src/render/colourMap.ts";
import { encodeSrgb8, linearSrgbToOklab, oklabToLinearSrgb } from "../../shared/src/render/oklab.ts";
import { GLYPH_ADVANCE, glyphFor, hasGlyph } from "../../shared/src/render/bitmapFont.ts";

/** 8-bit sRGB → CIELAB (D65), written here from the standards, independent of the OKLab code under test. */
function srgb8ToCieLab(r8: number, g8: number, b8: number): [number, number, number] {
  // IEC 61966-2-1:1999: sRGB decoding and the sRGB → XYZ matrix (D65).
  const lin = (v8: number): number => {
    const v = v8 / 255;
    return v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4;
  };
  const [r, g, b] = [lin(r8), lin(g8), lin(b8)];
  const x = 0.4124 * r + 0.3576 * g + 0.1805 * b;
  const y = 0.2126 * r + 0.7152 * g + 0.0722 * b;
  const z = 0.0193 * r + 0.1192 * g + 0.9505 * b;
  // CIE 15:2004, 8.2.1: CIE 1976 L*a*b* with the D65 white (0.9505, 1, 1.089).
  const f = (t: number): number => (t > (6 / 29) ** 3 ? Math.cbrt(t) : t / (3 * (6 / 29) ** 2) + 4 / 29);
  const [fx, fy, fz] = [f(x / 0.9505), f(y), f(z / 1.089)];
  return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

describe("OKLab conversion", () => {
  it("maps sRGB red and white to Ottosson's published OKLab values", () => {
    // Ottosson 2020, "A perceptual color space for image processing": red (1, 0, 0) → (0.628, 0.225, 0.126); from memory.
    const red = linearSrgbToOklab({ r: 1, g: 0, b: 0 });
    expect(red.L).toBeCloseTo(0.628, 3);
    expect(red.a).toBeCloseTo(0.2249, 3);
    expect(red.b).toBeCloseTo(0.1258, 3);
    // White is L = 1, a = b = 0 by the space's construction.
    const white = linearSrgbToOklab({ r: 1, g: 1, b: 1 });
    expect(white.L).toBeCloseTo(1, 4);
    expect(Math.hypot(white.a, white.b)).toBeLessThan(1e-4);
  });

  it("round-trips through linear sRGB", () => {
    for (const c of [{ r: 0.2, g: 0.5, b: 0.9 }, { r: 0.9, g: 0.1, b: 0.05 }]) {
      const back = oklabToLinearSrgb(linearSrgbToOklab(c));
      expect(back.r).toBeCloseTo(c.r, 6);
      expect(back.g).toBeCloseTo(c.g, 6);
      expect(back.b).toBeCloseTo(c.b, 6);
    }
  });

  it("encodes with the sRGB transfer curve", () => {
    // IEC 61966-2-1:1999: 0.5 linear → 0.7354 → code 188; 0.0031308 is the linear/power break point (→ 0.04045 → 10).
    expect(encodeSrgb8(0.5)).toBe(188);
    expect(encodeSrgb8(0.0031308)).toBe(10);
    expect(encodeSrgb8(1.2)).toBe(255);
  });
});

describe("Dusk colour map", () => {
  const map = duskColourMap();
  const lab = Array.from({ length: COLOUR_MAP_SIZE }, (_, i) => srgb8ToCieLab(map[3 * i], map[3 * i + 1], map[3 * i + 2]));

  it("rises strictly in CIE lightness from dark to near-white", () => {
    // Checked in CIELAB, a different space from the OKLab it was designed in.
    for (let i = 1; i < COLOUR_MAP_SIZE; i++) expect(lab[i][0]).toBeGreaterThan(lab[i - 1][0]);
    expect(lab[0][0]).toBeLessThan(10);
    expect(lab[COLOUR_MAP_SIZE - 1][0]).toBeGreaterThan(94);
  });

  it("takes perceptually even steps (CIE76 ΔE within a factor of 2.5 along the map)", () => {
    const steps: number[] = [];
    for (let i = 1; i < COLOUR_MAP_SIZE; i++) {
      steps.push(Math.hypot(lab[i][0] - lab[i - 1][0], lab[i][1] - lab[i - 1][1], lab[i][2] - lab[i - 1][2]));
    }
    // Averaged over 8 entries to look past 8-bit rounding.
    const smoothed = steps.map((_, i) => steps.slice(Math.max(0, i - 4), i + 4).reduce((s, v) => s + v, 0) / 8).slice(4, -4);
    expect(Math.max(...smoothed) / Math.min(...smoothed)).toBeLessThan(2.5);
  });
});

describe("bitmap font", () => {
  it("has a distinct glyph for every printable ASCII character", () => {
    const seen = new Set<string>();
    for (let code = 32; code < 127; code++) {
      const ch = String.fromCharCode(code);
      expect(hasGlyph(ch)).toBe(true);
      seen.add(glyphFor(ch).join(""));
    }
    expect(seen.size).toBe(95);
    expect(GLYPH_ADVANCE).toBe(6);
    expect(hasGlyph("\u00e9")).toBe(false);
  });
});
