/**
 * Minimal drawing on an RgbaImage: opaque fills and alpha-blended pixels, clipped to the image.
 * Everything stays opaque (alpha 255), so the PNG is what a viewer shows on any background.
 */
import type { RgbaImage } from "../types/analysis.ts";
import { fillInPlace } from "./gridPaint.ts";
import { allocateImageData } from "./imageMemory.ts";

export type Rgb = readonly [number, number, number];

export function createImage(width: number, height: number, background: Rgb): RgbaImage {
  if (!Number.isInteger(width) || width < 1 || !Number.isInteger(height) || height < 1) {
    throw new Error(`image size must be positive whole pixels, got ${width}×${height}`);
  }
  // In an image memory: painted and filtered for PNG in place (imageMemory.ts).
  const data = allocateImageData(width, height);
  data[0] = background[0];
  data[1] = background[1];
  data[2] = background[2];
  data[3] = 255;
  // Doubling copies (memmove) instead of a store per byte.
  for (let filled = 4; filled < data.length; filled *= 2) data.copyWithin(filled, 0, Math.min(filled, data.length - filled));
  return { width, height, data };
}

export function blendPixel(image: RgbaImage, x: number, y: number, colour: Rgb, alpha: number): void {
  if (x < 0 || y < 0 || x >= image.width || y >= image.height) return;
  const i = (y * image.width + x) * 4;
  const d = image.data;
  if (alpha >= 1) {
    d[i] = colour[0];
    d[i + 1] = colour[1];
    d[i + 2] = colour[2];
  } else {
    d[i] = Math.round(d[i] + (colour[0] - d[i]) * alpha);
    d[i + 1] = Math.round(d[i + 1] + (colour[1] - d[i + 1]) * alpha);
    d[i + 2] = Math.round(d[i + 2] + (colour[2] - d[i + 2]) * alpha);
  }
}

/**
 * Fills [x, x + w) × [y, y + h), clipped; alpha < 1 blends over what is there (as blendPixel, pixel for
 * pixel). The loop is written out rather than calling blendPixel per pixel: an image's first paint runs
 * before V8 has optimised anything, where a call per pixel made the waveform strip's background alone
 * cost ≈ 15 ms of a 1 s file's scan (issue #22).
 */
export function fillRect(image: RgbaImage, x: number, y: number, w: number, h: number, colour: Rgb, alpha = 1): void {
  const x0 = Math.max(0, Math.round(x));
  const y0 = Math.max(0, Math.round(y));
  const x1 = Math.min(image.width, Math.round(x + w));
  const y1 = Math.min(image.height, Math.round(y + h));
  if (x1 <= x0 || y1 <= y0) return;
  if (fillInPlace(image.data, image.width, x0, x1, y0, y1, colour, alpha)) return;
  const d = image.data;
  const [r, g, b] = colour;
  for (let py = y0; py < y1; py++) {
    const end = (py * image.width + x1) * 4;
    if (alpha >= 1) {
      for (let i = (py * image.width + x0) * 4; i < end; i += 4) {
        d[i] = r;
        d[i + 1] = g;
        d[i + 2] = b;
      }
    } else {
      for (let i = (py * image.width + x0) * 4; i < end; i += 4) {
        d[i] = Math.round(d[i] + (r - d[i]) * alpha);
        d[i + 1] = Math.round(d[i + 1] + (g - d[i + 1]) * alpha);
        d[i + 2] = Math.round(d[i + 2] + (b - d[i + 2]) * alpha);
      }
    }
  }
}

/** One-pixel outline just outside [x, x + w) × [y, y + h). */
export function strokeRectOutside(image: RgbaImage, x: number, y: number, w: number, h: number, colour: Rgb): void {
  fillRect(image, x - 1, y - 1, w + 2, 1, colour);
  fillRect(image, x - 1, y + h, w + 2, 1, colour);
  fillRect(image, x - 1, y, 1, h, colour);
  fillRect(image, x + w, y, 1, h, colour);
}
