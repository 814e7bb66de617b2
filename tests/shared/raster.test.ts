/**
 * fillRect writes its loop out for speed (issue #22); it must leave every byte as blending each pixel
 * with blendPixel does, clipping included. Reference: blendPixel over the same clipped rectangle
 * (the rounding of x, y, x + w, y + h is the function's documented contract).
 */
import { describe, expect, it } from "vitest";
import { imageMemoryOf } from "../../shared/src/render/imageMemory.ts";
import { blendPixel, createImage, fillRect, type Rgb } from "../../shared/src/render/raster.ts";
import { seededRandom } from "../fixtures/synth.ts";

function referenceFill(image: { width: number; height: number; data: Uint8Array }, x: number, y: number, w: number, h: number, colour: Rgb, alpha: number): void {
  for (let py = Math.round(y); py < Math.round(y + h); py++) {
    for (let px = Math.round(x); px < Math.round(x + w); px++) blendPixel(image, px, py, colour, alpha);
  }
}

describe("fillRect", () => {
  // createImage's pixels lie in an image memory, where fillRect runs gridPaint.wat's fills; a plain array
  // takes the JavaScript loops. Both against blendPixel, with alphas of one half (rounding ties) among them.
  it.each([
    ["in an image memory (the kernels)", true],
    ["in a plain array (the JavaScript)", false],
  ])("matches blendPixel pixel for pixel, %s: opaque and blended, inside, across and outside every edge", (_name, inMemory) => {
    const random = seededRandom(22);
    const made = createImage(37, 23, [10, 200, 30]);
    expect(imageMemoryOf(made.data) !== null).toBe(true);
    const a = inMemory ? made : { ...made, data: made.data.slice() };
    expect(imageMemoryOf(a.data) !== null).toBe(inMemory);
    const b = createImage(37, 23, [10, 200, 30]);
    for (let k = 0; k < 400; k++) {
      const x = random() * 50 - 8;
      const y = random() * 34 - 6;
      const w = random() * 30 - 2;
      const h = random() * 20 - 2;
      const colour: Rgb = [Math.floor(random() * 256), Math.floor(random() * 256), Math.floor(random() * 256)];
      const alpha = k % 4 === 0 ? 1 : k % 4 === 1 ? random() : k % 4 === 2 ? 0.5 : 1.5;
      fillRect(a, x, y, w, h, colour, alpha);
      referenceFill(b, x, y, w, h, colour, alpha);
      expect(a.data).toEqual(b.data);
    }
    // The fills did change the image (a test that compares two untouched images proves nothing).
    expect(a.data.some((v, i) => i % 4 !== 3 && v !== [10, 200, 30][i % 4])).toBe(true);
  });

  it("keeps every pixel opaque", () => {
    const image = createImage(8, 8, [0, 0, 0]);
    fillRect(image, 1, 1, 5, 5, [255, 255, 255], 0.4);
    for (let i = 3; i < image.data.length; i += 4) expect(image.data[i]).toBe(255);
    expect(image.data[(1 * 8 + 1) * 4]).toBe(Math.round(255 * 0.4));
  });
});
