/**
 * Where an image's pixels live (issue #22): in a WebAssembly memory of their own, followed by room for what
 * the kernels need to finish the image, so the plot is painted (gridPaint.wat) and the PNG scanlines are
 * filtered (pngFilter.wat) in place. Before, each image had its RGBA bytes in a plain array and each kernel a
 * fresh memory of its own, with the pixels copied into them and the results copied out: on a one-file
 * scan ≈ 22 MB of fresh pages and copies for the spectrogram alone, now ≈ 10 MB.
 *
 * Layout: the RGBA bytes at 0, then the work area (`workAt`, 8-byte aligned), big enough for the PNG
 * filter's RGB and filtered rows (pngFilter.ts) and for the paint kernel's inputs when the grid has at most
 * one cell per pixel (gridPaint.ts); a user whose inputs do not fit makes a memory of its own as before.
 * The two uses follow each other (paint, then PNG), so they share the area. Where WebAssembly is missing the
 * pixels are a plain array and every kernel user takes its JavaScript path.
 */
import { createKernelMemory, type WasmMemory } from "../wasm/kernelModule.ts";

/** The PNG filter writes 16 bytes for 12 in its RGB conversion: room past the last pixel. */
export const RGB_STORE_SLACK = 16;

/** Bytes the PNG filter needs after the pixels: RGB rows (+ slack), then the filtered rows. */
export function pngWorkBytes(width: number, height: number): number {
  return 3 * width * height + RGB_STORE_SLACK + (3 * width + 1) * height;
}

/** Bytes the paint kernel needs for a grid of `cells` float32 cells, a plot of width × height and a colour table. */
export function paintWorkBytes(cells: number, width: number, height: number, lutBytes: number): number {
  return 4 * cells + 4 * width + 4 * height + lutBytes;
}

/** The colour table's bytes the paint area is sized for (3 bytes × 256 colours, colourMap.ts). */
const LUT_BYTES = 3 * 256;

export interface ImageMemory {
  memory: WasmMemory;
  /** First byte after the pixels (8-byte aligned). */
  workAt: number;
  /** Bytes from workAt to the memory's end. */
  workBytes: number;
}

const byBuffer = new WeakMap<ArrayBufferLike, ImageMemory>();

/** Zeroed RGBA bytes for width × height pixels, in an image memory where there is WebAssembly. */
export function allocateImageData(width: number, height: number): Uint8Array {
  const rgbaBytes = 4 * width * height;
  const workAt = Math.ceil(rgbaBytes / 8) * 8;
  const work = Math.max(pngWorkBytes(width, height), paintWorkBytes(width * height, width, height, LUT_BYTES));
  const memory = createKernelMemory(workAt + work);
  if (memory === null) return new Uint8Array(rgbaBytes);
  byBuffer.set(memory.buffer, { memory, workAt, workBytes: memory.buffer.byteLength - workAt });
  return new Uint8Array(memory.buffer, 0, rgbaBytes);
}

/** The image memory `data` is the pixels of (as allocateImageData made them), else null. */
export function imageMemoryOf(data: Uint8Array): ImageMemory | null {
  if (data.byteOffset !== 0) return null;
  const found = byBuffer.get(data.buffer);
  return found && data.length <= found.workAt ? found : null;
}
