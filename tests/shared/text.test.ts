import { describe, expect, it } from "vitest";
import { capHeightPx, drawText, fitTextKeepingEnd, textWidthPx, useTypesetter, type Typesetter } from "../../shared/src/render/text.ts";
import { createImage } from "../../shared/src/render/raster.ts";
import type { RgbaImage } from "../../shared/src/types/analysis.ts";

/**
 * A stand-in typesetter whose every character is a solid block 0.5 em wide and 0.7 em tall on the baseline,
 * with one row of half coverage under it: enough to check placement and blending without a font.
 */
const blocks: Typesetter = {
  measure: (text, sizePx) => [...text].length * 0.5 * sizePx,
  capHeight: (sizePx) => 0.7 * sizePx,
  rasterise(text, sizePx) {
    const width = Math.round([...text].length * 0.5 * sizePx);
    const top = Math.round(0.7 * sizePx);
    const alpha = new Uint8Array(width * (top + 1));
    alpha.fill(255, 0, width * top);
    alpha.fill(128, width * top);
    return { width, height: top + 1, left: 0, top, alpha };
  },
};

const BG = [10, 20, 30] as const;
const INK = [250, 240, 230] as const;

function inkBox(img: RgbaImage): { x0: number; x1: number; y0: number; y1: number } | null {
  let box: { x0: number; x1: number; y0: number; y1: number } | null = null;
  for (let y = 0; y < img.height; y++) {
    for (let x = 0; x < img.width; x++) {
      const i = (y * img.width + x) * 4;
      if (img.data[i] === BG[0] && img.data[i + 1] === BG[1] && img.data[i + 2] === BG[2]) continue;
      box = box ? { x0: Math.min(box.x0, x), x1: Math.max(box.x1, x), y0: Math.min(box.y0, y), y1: Math.max(box.y1, y) } : { x0: x, x1: x, y0: y, y1: y };
    }
  }
  return box;
}

describe("text on images", () => {
  it("says what is missing when no typesetter was installed", () => {
    // Must run before useTypesetter below: vitest gives each test file its own module state.
    expect(() => textWidthPx("20k", 16)).toThrow(/no typesetter installed: call useTypesetter\(\)/);
  });

  it("puts the cap top at y and aligns left, centre and right on x", () => {
    useTypesetter(blocks);
    expect(capHeightPx(20)).toBe(14);
    expect(textWidthPx("abcd", 20)).toBe(40);
    for (const [align, x0] of [["left", 50], ["center", 30], ["right", 10]] as const) {
      const img = createImage(120, 40, BG);
      drawText(img, "abcd", 50, 5, INK, { sizePx: 20, align });
      // Cap top at y = 5, baseline 14 rows lower; the half-covered row sits under the baseline.
      expect(inkBox(img)).toEqual({ x0, x1: x0 + 39, y0: 5, y1: 5 + 14 });
    }
  });

  it("blends partial coverage between the background and the ink colour", () => {
    useTypesetter(blocks);
    const img = createImage(60, 40, BG);
    drawText(img, "ab", 0, 0, INK, { sizePx: 20 });
    const at = (x: number, y: number) => [...img.data.subarray((y * 60 + x) * 4, (y * 60 + x) * 4 + 3)];
    expect(at(3, 3)).toEqual([...INK]);
    // 128/255 of the way from background to ink.
    expect(at(3, 14)).toEqual([130, 130, 130]);
  });

  it("clips at the image edges instead of writing outside it", () => {
    useTypesetter(blocks);
    const img = createImage(30, 12, BG);
    drawText(img, "wide label", -7, -3, INK, { sizePx: 20 });
    drawText(img, "x", 25, 8, INK, { sizePx: 20 });
    expect(img.data.length).toBe(30 * 12 * 4);
    expect(inkBox(img)).toEqual({ x0: 0, x1: 29, y0: 0, y1: 11 });
  });

  it("shortens a long path from the front, keeping the file name", () => {
    useTypesetter(blocks);
    const path = "Harbourside Sound Archive/Lighthouse Choir/reel-07.wav";
    const short = fitTextKeepingEnd(path, 200, 20);
    expect(short.startsWith("…")).toBe(true);
    expect(path.endsWith(short.slice(1))).toBe(true);
    expect(textWidthPx(short, 20)).toBeLessThanOrEqual(200);
    // One more character would not have fitted.
    expect(textWidthPx(`…${path.slice(path.length - short.length)}`, 20)).toBeGreaterThan(200);
    expect(fitTextKeepingEnd("reel-07.wav", 200, 20)).toBe("reel-07.wav");
    expect(fitTextKeepingEnd(path, 5, 20)).toBe("");
  });
});

describe("blending coverage", () => {
  // createImage's pixels lie in an image memory, where the mask is blended by gridPaint.wat's blendMask; a
  // plain array takes text.ts's loop. Random coverage (ties of rounding among it), partly off every edge.
  it("gives the same bytes in an image memory (the kernel) as in a plain array (the JavaScript)", () => {
    let seed = 7;
    const random = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    const noisy: Typesetter = {
      measure: (text, sizePx) => text.length * 0.6 * sizePx,
      capHeight: (sizePx) => 0.7 * sizePx,
      rasterise(text, sizePx) {
        const width = Math.round(text.length * 0.6 * sizePx) + 3;
        const height = Math.round(sizePx) + 2;
        const alpha = Uint8Array.from({ length: width * height }, () => (random() < 0.2 ? 0 : random() < 0.1 ? 255 : Math.floor(random() * 256)));
        return { width, height, left: -1, top: Math.round(0.8 * sizePx), alpha };
      },
    };
    useTypesetter(noisy);
    const inMemory = createImage(90, 50, BG);
    const plain = { ...inMemory, data: inMemory.data.slice() };
    for (let k = 0; k < 40; k++) {
      const args = [`t${k}`, random() * 110 - 20, random() * 70 - 20, [Math.floor(random() * 256), Math.floor(random() * 256), Math.floor(random() * 256)] as const, { sizePx: 10 + Math.floor(random() * 20), alpha: k % 3 === 0 ? 1 : k % 3 === 1 ? 0.5 : random() }] as const;
      // The same mask both times: the typesetter draws anew per call, so replay the generator's state.
      const saved = seed;
      drawText(inMemory, ...args);
      seed = saved;
      drawText(plain, ...args);
      expect(Buffer.compare(Buffer.from(inMemory.data), Buffer.from(plain.data))).toBe(0);
    }
    expect(inkBox(inMemory)).not.toBeNull();
  });
});
