/**
 * PNG scanlines of an RGBA raster: 8-bit RGB composited over white (our images are opaque, and RGB is a
 * quarter smaller than RGBA: PNG colour type 2, ISO/IEC 15948:2004, 11.2.2), every row with the Paeth
 * filter (9.4), as pngjs 7 writes them with filterType 4 (cli/src/render/encodePng.ts deflates them).
 * The loops run in WebAssembly SIMD (pngFilter.wat) where the runtime has it: an image is encoded once, so
 * JavaScript's loops would run unoptimised for most of it (≈ 35 ms of a one-file scan's start-up, issue #22);
 * the JavaScript below gives the same bytes (tests/shared/pngFilter.test.ts) and runs where WebAssembly does not.
 */
import { kernelModule, type KernelInstance } from "../wasm/kernelModule.ts";
import { imageMemoryOf, pngWorkBytes, RGB_STORE_SLACK } from "./imageMemory.ts";
import { WASM_MODULE_BYTES } from "./pngFilter.generated.ts";

/** The filter-type byte of a Paeth row. */
export const PNG_FILTER_PAETH = 4;
const BYTES_PER_PIXEL = 3;

const instantiate = kernelModule(WASM_MODULE_BYTES);

interface PngFilterExports {
  rgb(src: number, pixels: number, dst: number): void;
  paeth(src: number, rowBytes: number, y0: number, y1: number, dst: number): void;
}

/**
 * Rows a kernel call: V8 runs a WebAssembly function's first calls in its baseline compiler (Liftoff) and
 * swaps in the optimised code for later calls only, so an image is handed over in slices (about twice as
 * fast as one call, measured on 1600×600).
 */
const ROWS_A_CALL = 16;

/**
 * The filtered scanlines ((3·width + 1)·height bytes) of `rgba` (4·width·height bytes). `useWasm: false`
 * runs the JavaScript loops (tests compare the two).
 *
 * Pixels in an image memory (createImage, imageMemory.ts) are filtered where they lie, and the scanlines
 * returned are a view of that memory's work area: valid until the image's memory is used again (painted or
 * filtered anew), which nothing does once an image is encoded. Other pixels are copied into a memory made
 * for the call, dropped with it (a worker keeps no 10 MB between files), and the scanlines copied out.
 */
export function pngScanlines(rgba: Uint8Array, width: number, height: number, useWasm = true): Uint8Array {
  const pixels = width * height;
  if (rgba.length !== pixels * 4) throw new Error(`RGBA data for ${width}×${height} must hold ${pixels * 4} bytes, got ${rgba.length}`);
  const rowBytes = width * BYTES_PER_PIXEL;
  const outBytes = (rowBytes + 1) * height;
  const inPlace = useWasm ? imageMemoryOf(rgba) : null;
  let kernels: KernelInstance | null = null;
  let rgbAt = rgba.length;
  if (inPlace && inPlace.workBytes >= pngWorkBytes(width, height)) {
    kernels = instantiate.on(inPlace.memory);
    rgbAt = inPlace.workAt;
  }
  const copied = kernels === null;
  if (copied && useWasm) kernels = instantiate(rgbAt + pngWorkBytes(width, height));
  if (!kernels) return paethRows(toRgb(rgba, pixels), rowBytes, height);
  const outAt = rgbAt + pixels * BYTES_PER_PIXEL + RGB_STORE_SLACK;
  const memory = new Uint8Array(kernels.memory.buffer);
  if (copied) memory.set(rgba, 0);
  const k = kernels.exports as unknown as PngFilterExports;
  for (let y = 0; y < height; y += ROWS_A_CALL) {
    const rows = Math.min(ROWS_A_CALL, height - y);
    k.rgb(4 * y * width, rows * width, rgbAt + rowBytes * y);
  }
  for (let y = 0; y < height; y += ROWS_A_CALL) k.paeth(rgbAt, rowBytes, y, Math.min(height, y + ROWS_A_CALL), outAt);
  return copied ? memory.slice(outAt, outAt + outBytes) : memory.subarray(outAt, outAt + outBytes);
}

/**
 * RGBA → RGB, composited over white where a pixel is not opaque, rounding as pngjs does
 * (round((1 − a)·255 + a·v) with a = alpha / 255).
 */
function toRgb(rgba: Uint8Array, pixels: number): Uint8Array {
  const out = new Uint8Array(pixels * 3);
  for (let p = 0, i = 0, o = 0; p < pixels; p++, i += 4, o += 3) {
    const alpha = rgba[i + 3];
    if (alpha === 255) {
      out[o] = rgba[i];
      out[o + 1] = rgba[i + 1];
      out[o + 2] = rgba[i + 2];
    } else {
      const a = alpha / 255;
      out[o] = Math.round((1 - a) * 255 + a * rgba[i]);
      out[o + 1] = Math.round((1 - a) * 255 + a * rgba[i + 1]);
      out[o + 2] = Math.round((1 - a) * 255 + a * rgba[i + 2]);
    }
  }
  return out;
}

/** Each row as filter byte 4 then x − Paeth(left, up, up-left) (ISO/IEC 15948:2004, 9.4), bytes before the image 0. */
function paethRows(px: Uint8Array, rowBytes: number, height: number): Uint8Array {
  const out = new Uint8Array((rowBytes + 1) * height);
  const bpp = BYTES_PER_PIXEL;
  for (let y = 0, at = 0, row = 0; y < height; y++, row += rowBytes) {
    out[at++] = PNG_FILTER_PAETH;
    for (let x = 0; x < rowBytes; x++) {
      const left = x >= bpp ? px[row + x - bpp] : 0;
      const up = y > 0 ? px[row + x - rowBytes] : 0;
      const upLeft = y > 0 && x >= bpp ? px[row + x - rowBytes - bpp] : 0;
      const estimate = left + up - upLeft;
      const pLeft = Math.abs(estimate - left);
      const pUp = Math.abs(estimate - up);
      const pUpLeft = Math.abs(estimate - upLeft);
      const predictor = pLeft <= pUp && pLeft <= pUpLeft ? left : pUp <= pUpLeft ? up : upLeft;
      out[at++] = px[row + x] - predictor;
    }
  }
  return out;
}
