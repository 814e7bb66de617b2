import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import {
  colourMapTableModuleText,
  COLOUR_MAP_SIZE,
  computeWracklineColourMap,
  wracklineColourMap,
  wracklineCssGradient,
  wracklineHex,
} from "../../shared/src/render/colourMap.ts";
import { encodeSrgb8, linearSrgbToOklab, oklabToLinearSrgb } from "../../shared/src/render/oklab.ts";

/** IEC 61966-2-1:1999: 8-bit sRGB code value → linear light. */
const decodeSrgb8 = (v8: number): number => {
  const v = v8 / 255;
  return v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4;
};

/** 8-bit sRGB → CIELAB (D65), written here from the standards, independent of the OKLab code under test. */
function srgb8ToCieLab(r8: number, g8: number, b8: number): [number, number, number] {
  return linearToCieLab(decodeSrgb8(r8), decodeSrgb8(g8), decodeSrgb8(b8));
}

function linearToCieLab(r: number, g: number, b: number): [number, number, number] {
  // IEC 61966-2-1:1999: the sRGB → XYZ matrix (D65).
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

type Matrix3 = readonly [number, number, number, number, number, number, number, number, number];

/**
 * Colour-vision deficiency simulation of Machado, Oliveira & Fernandes, "A Physiologically-based Model for
 * Simulation of Color Vision Deficiency", IEEE TVCG 15(6), 2009: their matrices at severity 1.0, applied to
 * linear sRGB (values from memory, and checked against public copies of the paper's table).
 */
const MACHADO_2009: Record<"protanopia" | "deuteranopia" | "tritanopia", Matrix3> = {
  protanopia: [0.152286, 1.052583, -0.204868, 0.114503, 0.786281, 0.099216, -0.003882, -0.048116, 1.051998],
  deuteranopia: [0.367322, 0.860646, -0.227968, 0.280085, 0.672501, 0.047413, -0.01182, 0.04294, 0.968881],
  tritanopia: [1.255528, -0.076749, -0.178779, -0.078411, 0.930809, 0.147602, 0.004733, 0.691367, 0.3039],
};

function simulate(m: Matrix3, r8: number, g8: number, b8: number): [number, number, number] {
  const [r, g, b] = [decodeSrgb8(r8), decodeSrgb8(g8), decodeSrgb8(b8)];
  const clamp = (v: number): number => Math.min(1, Math.max(0, v));
  return linearToCieLab(clamp(m[0] * r + m[1] * g + m[2] * b), clamp(m[3] * r + m[4] * g + m[5] * b), clamp(m[6] * r + m[7] * g + m[8] * b));
}

const hueDegrees = (lab: readonly number[]): number => ((Math.atan2(lab[2], lab[1]) * 180) / Math.PI + 360) % 360;

describe("Wrackline colour map", () => {
  const map = wracklineColourMap();
  const rgbOf = (i: number): [number, number, number] => [map[3 * i], map[3 * i + 1], map[3 * i + 2]];
  const lab = Array.from({ length: COLOUR_MAP_SIZE }, (_, i) => srgb8ToCieLab(...rgbOf(i)));

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

  it("runs from warm rust through green to cool foam: hue climbs with level", () => {
    // CIELAB hue angles: rust/brown lies between red (≈ 40°) and yellow (≈ 100°); green ≈ 135°–165°; cyan ≈ 190°–230°.
    expect(hueDegrees(lab[16])).toBeGreaterThan(20);
    expect(hueDegrees(lab[16])).toBeLessThan(90);
    expect(hueDegrees(lab[128])).toBeGreaterThan(100);
    expect(hueDegrees(lab[128])).toBeLessThan(170);
    expect(hueDegrees(lab[230])).toBeGreaterThan(180);
    expect(hueDegrees(lab[230])).toBeLessThan(260);
  });

  for (const [name, m] of Object.entries(MACHADO_2009)) {
    it(`keeps its order for ${name} (Machado, Oliveira & Fernandes 2009, severity 1.0)`, () => {
      const seen = Array.from({ length: COLOUR_MAP_SIZE }, (_, i) => simulate(m, ...rgbOf(i)));
      // Lightness as the simulated reader sees it never falls, and rises over every 8 entries (≈ 4 dB).
      for (let i = 1; i < COLOUR_MAP_SIZE; i++) expect(seen[i][0]).toBeGreaterThan(seen[i - 1][0] - 0.5);
      for (let i = 8; i < COLOUR_MAP_SIZE; i++) expect(seen[i][0]).toBeGreaterThan(seen[i - 8][0] + 1);
      // 10 dB apart (≈ 20 entries of 130 dB) stays a clear difference: CIE76 ΔE above 4, well over the
      // ≈ 2.3 usually quoted as just noticeable (common practice, from memory).
      for (let i = 20; i < COLOUR_MAP_SIZE; i++) {
        const [a, b] = [seen[i], seen[i - 20]];
        expect(Math.hypot(a[0] - b[0], a[1] - b[1], a[2] - b[2])).toBeGreaterThan(4);
      }
    });
  }

  it("reads in greyscale: Rec. 709 luma rises over every 4 entries", () => {
    // ITU-R BT.709 luma weights on the 8-bit code values, as a greyscale printer or screen would do.
    const luma = Array.from({ length: COLOUR_MAP_SIZE }, (_, i) => 0.2126 * map[3 * i] + 0.7152 * map[3 * i + 1] + 0.0722 * map[3 * i + 2]);
    for (let i = 4; i < COLOUR_MAP_SIZE; i++) expect(luma[i]).toBeGreaterThan(luma[i - 4]);
  });

  it("is the table generated from its design, byte for byte (run scripts/generate-colour-map.ts after a change)", () => {
    const computed = computeWracklineColourMap();
    expect(computed.length).toBe(COLOUR_MAP_SIZE * 3);
    expect(Array.from(wracklineColourMap())).toEqual(Array.from(computed));
    const file = new URL("../../shared/src/render/colourMapTable.generated.ts", import.meta.url);
    expect(readFileSync(file, "utf8")).toBe(colourMapTableModuleText(computed));
  });

  it("gives the portal the same colours as hex and as a CSS gradient", () => {
    const hex = (i: number): string => `#${rgbOf(i).map((v) => v.toString(16).padStart(2, "0")).join("")}`;
    expect(wracklineHex(0)).toBe(hex(0));
    expect(wracklineHex(1)).toBe(hex(COLOUR_MAP_SIZE - 1));
    expect(wracklineHex(2)).toBe(hex(COLOUR_MAP_SIZE - 1));
    expect(wracklineHex(Number.NaN)).toBe(hex(0));
    const css = wracklineCssGradient("to top", 5);
    expect(css).toBe(`linear-gradient(to top, ${hex(0)} 0%, ${hex(64)} 25%, ${hex(128)} 50%, ${hex(191)} 75%, ${hex(255)} 100%)`);
  });
});
