/**
 * RgbaImage → PNG bytes with pngjs, synchronously (the scan writes one image at a time, and a
 * 1600×600 spectrogram takes about a tenth of a second).
 */
import { PNG } from "pngjs";
import type { RgbaImage } from "@tidemark/shared/types/analysis";

/**
 * Our images are opaque, so they are written as 8-bit RGB (PNG colour type 2, ISO/IEC 15948:2004,
 * 11.2.2): a quarter smaller than RGBA. Every row uses the Paeth filter (9.4): pngjs's default tries all
 * five filters on each row, which costs 2–3× the time for files ≈ 2 % smaller. pngjs deflates with the
 * Z_RLE strategy, for which the level hardly matters, so it is left alone.
 */
const PACK_OPTIONS = { colorType: 2, inputColorType: 6, inputHasAlpha: true, filterType: 4 } as const;

export function encodePng(image: RgbaImage): Buffer {
  const { width, height, data } = image;
  if (!Number.isInteger(width) || width < 1 || !Number.isInteger(height) || height < 1) {
    throw new Error(`PNG size must be positive whole pixels, got ${width}×${height}`);
  }
  if (data.length !== width * height * 4) {
    throw new Error(`RGBA data for ${width}×${height} must hold ${width * height * 4} bytes, got ${data.length}`);
  }
  // pngjs's sync packer reads only width, height and data; no need to build (and allocate) a full PNG stream.
  const source = { width, height, data: Buffer.from(data.buffer, data.byteOffset, data.byteLength) } as unknown as PNG;
  return PNG.sync.write(source, PACK_OPTIONS);
}
