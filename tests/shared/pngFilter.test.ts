/**
 * PNG scanlines (shared/src/render/pngFilter.ts): the WebAssembly SIMD kernels and the JavaScript loops give
 * the same bytes, and both are what pngjs (npm, an independent encoder) filters: RGB over white, Paeth rows
 * (ISO/IEC 15948:2004, 9.4). Sizes cover the SIMD loops' edges: widths around 16-byte steps, one-pixel images.
 */
import { inflateSync } from "node:zlib";
import { PNG } from "pngjs";
import { describe, expect, it } from "vitest";
import { allocateImageData, imageMemoryOf } from "../../shared/src/render/imageMemory.ts";
import { pngScanlines } from "../../shared/src/render/pngFilter.ts";
import { WASM_MODULE_BYTES } from "../../shared/src/render/pngFilter.generated.ts";
import { seededRandom } from "../fixtures/synth.ts";

/** Noise, with every `translucentEvery`-th pixel translucent (0 for none) and runs of equal bytes (ties in Paeth). */
function image(width: number, height: number, seed: number, translucentEvery: number): Uint8Array {
  const random = seededRandom(seed);
  const data = new Uint8Array(width * height * 4);
  for (let p = 0; p < width * height; p++) {
    const flat = random() < 0.3;
    for (let c = 0; c < 3; c++) data[4 * p + c] = flat && p > 0 ? data[4 * (p - 1) + c] : Math.floor(random() * 256);
    data[4 * p + 3] = translucentEvery > 0 && p % translucentEvery === 0 ? Math.floor(random() * 255) : 255;
  }
  return data;
}

/** pngjs's filtered scanlines: its PNG's IDAT, inflated. */
function pngjsScanlines(rgba: Uint8Array, width: number, height: number): Buffer {
  const source = new PNG({ width, height });
  source.data = Buffer.from(rgba);
  const png = PNG.sync.write(source, { colorType: 2, inputColorType: 6, inputHasAlpha: true, filterType: 4 });
  const idat: Buffer[] = [];
  for (let at = 8; at < png.length; ) {
    const length = png.readUInt32BE(at);
    if (png.toString("latin1", at + 4, at + 8) === "IDAT") idat.push(png.subarray(at + 8, at + 8 + length));
    at += length + 12;
  }
  return inflateSync(Buffer.concat(idat));
}

describe("pngScanlines", () => {
  it("has WebAssembly SIMD here, so the kernel path is the one compared", () => {
    expect(WebAssembly.validate(WASM_MODULE_BYTES)).toBe(true);
  });

  const sizes: [number, number][] = [[1, 1], [1, 5], [2, 3], [5, 1], [6, 4], [16, 3], [17, 2], [21, 3], [37, 23], [64, 2], [1600, 3]];
  for (const [width, height] of sizes) {
    for (const translucentEvery of [0, 7]) {
      it(`${width}×${height}${translucentEvery ? ", some pixels translucent" : ""}: kernels, JavaScript and pngjs agree`, () => {
        const rgba = image(width, height, width * 1000 + height + translucentEvery, translucentEvery);
        const fromKernels = pngScanlines(rgba, width, height);
        const fromJs = pngScanlines(rgba, width, height, false);
        expect(fromKernels.length).toBe((3 * width + 1) * height);
        expect(Buffer.compare(Buffer.from(fromKernels), Buffer.from(fromJs))).toBe(0);
        expect(Buffer.compare(Buffer.from(fromKernels), pngjsScanlines(rgba, width, height))).toBe(0);
      });
    }
  }

  // createImage's pixels live in an image memory (imageMemory.ts): filtered where they lie, the scanlines a
  // view of that memory, and the very bytes of the JavaScript and of pngjs.
  for (const [width, height] of [[1, 1], [17, 2], [37, 23], [1600, 3]] as const) {
    it(`${width}×${height} in an image memory: filtered in place, the same bytes`, () => {
      const rgba = allocateImageData(width, height);
      expect(imageMemoryOf(rgba)).not.toBeNull();
      rgba.set(image(width, height, width + height, 5));
      const pixelsBefore = rgba.slice();
      const inPlace = pngScanlines(rgba, width, height);
      expect(inPlace.buffer).toBe(rgba.buffer);
      expect(Buffer.compare(Buffer.from(rgba), Buffer.from(pixelsBefore))).toBe(0);
      expect(Buffer.compare(Buffer.from(inPlace), Buffer.from(pngScanlines(pixelsBefore, width, height, false)))).toBe(0);
      expect(Buffer.compare(Buffer.from(inPlace), pngjsScanlines(pixelsBefore, width, height))).toBe(0);
    });
  }

  it("rounds a translucent pixel's blend over white as pngjs does", () => {
    // alpha 2 over v = 0: (1 − 2/255)·255 + 0 = 253 exactly; alpha 128 over 1: 127·255/255 + 128/255 = 127.50…, up to 128.
    const rgba = Uint8Array.of(0, 1, 255, 2, 1, 1, 1, 128);
    const rows = pngScanlines(rgba, 2, 1);
    const js = pngScanlines(rgba, 2, 1, false);
    expect([...rows]).toEqual([...js]);
    expect([...rows]).toEqual([...pngjsScanlines(rgba, 2, 1)]);
  });

  it("refuses data that does not match the size", () => {
    expect(() => pngScanlines(new Uint8Array(10), 2, 2)).toThrow(/must hold 16 bytes, got 10/);
  });
});
