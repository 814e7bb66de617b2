/**
 * Painting a spectrogram plot through the colour map (spectrogramImage.ts), once per image over ≈ 10⁶ pixels:
 * in WebAssembly (gridPaint.wat) where the runtime has it, as V8 would run most of the JavaScript loop
 * unoptimised (≈ 5 ms less on a one-file scan, issue #22; the level grid's bytes, a simpler loop, measured
 * no faster that way and stay in JavaScript). The JavaScript loop here gives the same bytes
 * (tests/shared/gridPaint.test.ts) and runs where WebAssembly does not.
 */
import { kernelModule } from "../wasm/kernelModule.ts";
import { imageMemoryOf, paintWorkBytes } from "./imageMemory.ts";
import { WASM_MODULE_BYTES } from "./gridPaint.generated.ts";

const instantiate = kernelModule(WASM_MODULE_BYTES);

/**
 * Rows a kernel call: V8 runs a WebAssembly function's first calls in its baseline compiler and swaps in the
 * optimised code for later calls only, so the plot is handed over in slices.
 */
const ROWS_A_CALL = 16;

interface GridPaintExports {
  paint(db: number, cellOf: number, rowOf: number, width: number, height: number, rgba: number, lut: number, minDb: number, indexPerDb: number, top: number, noData: number): void;
  fillRows(rgba: number, stride: number, x0: number, x1: number, y0: number, y1: number, colour: number): void;
  blendRows(rgba: number, stride: number, x0: number, x1: number, y0: number, y1: number, colour: number, alpha: number): void;
  blendMask(rgba: number, stride: number, left: number, top: number, mask: number, maskWidth: number, x0: number, x1: number, y0: number, y1: number, colour: number, k: number): void;
}

const isByte = (v: number): boolean => Number.isInteger(v) && v >= 0 && v <= 255;

/**
 * raster.ts's fillRect over pixels [x0, x1) × [y0, y1) (already clipped), in gridPaint.wat's fillRows or
 * blendRows, where the image's pixels lie in an image memory and the colour is whole bytes: the same bytes as
 * its loops (tests/shared/raster.test.ts). False when it did nothing (the caller's loops then run). The
 * waveform strip alone makes some 1600 fills; as JavaScript they ran unoptimised and then were compiled
 * twice over on a 1 s file (issue #22).
 */
export function fillInPlace(data: Uint8Array, width: number, x0: number, x1: number, y0: number, y1: number, colour: readonly [number, number, number], alpha: number): boolean {
  const inPlace = imageMemoryOf(data);
  if (inPlace === null || !isByte(colour[0]) || !isByte(colour[1]) || !isByte(colour[2])) return false;
  const kernels = instantiate.on(inPlace.memory);
  if (kernels === null) return false;
  const k = kernels.exports as unknown as GridPaintExports;
  const packed = colour[0] | (colour[1] << 8) | (colour[2] << 16);
  if (alpha >= 1) k.fillRows(0, 4 * width, x0, x1, y0, y1, packed);
  else k.blendRows(0, 4 * width, x0, x1, y0, y1, packed, alpha);
  return true;
}

export interface PlotPaint {
  /** The image's RGBA bytes and width; the plot is `width` × `height` pixels from (left, top). */
  data: Uint8Array;
  imageWidth: number;
  left: number;
  top: number;
  width: number;
  height: number;
  db: Float32Array;
  /** Per pixel column: index of its grid column's first cell; per pixel row: its grid row. */
  cellOf: Int32Array;
  rowOf: Int32Array;
  /** 3 bytes a colour, indices 0…top. */
  lut: Uint8Array;
  minDb: number;
  indexPerDb: number;
  noData: readonly [number, number, number];
}

/**
 * Paints R, G and B of the plot's pixels (alpha as it is): each pixel's cell through the colour map. `useWasm: false` runs the JavaScript.
 * An image in an image memory (createImage, imageMemory.ts) is painted where it lies, with the grid and
 * tables copied into the memory's work area; any other is copied into a memory made for the call and back.
 */
export function paintPlotCells(p: PlotPaint, useWasm = true): void {
  const top = p.lut.length / 3 - 1;
  const rowBytes = 4 * p.width;
  const inPlace = useWasm ? imageMemoryOf(p.data) : null;
  const fits = inPlace !== null && inPlace.workBytes >= paintWorkBytes(p.db.length, p.width, p.height, p.lut.length);
  const cellsAt = fits ? inPlace.workAt : 0;
  const cellOfAt = cellsAt + 4 * p.db.length;
  const rowOfAt = cellOfAt + 4 * p.width;
  const lutAt = rowOfAt + 4 * p.height;
  const rgbaAt = lutAt + p.lut.length;
  const kernels = !useWasm ? null : fits ? instantiate.on(inPlace.memory) : instantiate(rgbaAt + rowBytes * p.height);
  if (kernels) {
    const buffer = kernels.memory.buffer;
    new Float32Array(buffer, cellsAt, p.db.length).set(p.db);
    new Int32Array(buffer, cellOfAt, p.width).set(p.cellOf);
    new Int32Array(buffer, rowOfAt, p.height).set(p.rowOf);
    const bytes = new Uint8Array(buffer);
    bytes.set(p.lut, lutAt);
    const plotRow = (y: number): number => ((p.top + y) * p.imageWidth + p.left) * 4;
    const noData = p.noData[0] | (p.noData[1] << 8) | (p.noData[2] << 16);
    const k = kernels.exports as unknown as GridPaintExports;
    if (fits) {
      // The image's rows are not contiguous in the plot's width: one call a row, straight into the pixels.
      for (let y = 0; y < p.height; y++) k.paint(cellsAt, cellOfAt, rowOfAt + 4 * y, p.width, 1, plotRow(y), lutAt, p.minDb, p.indexPerDb, top, noData);
      return;
    }
    // The plot's rows in and out as they are, so alpha (and nothing else) stays the image's.
    for (let y = 0; y < p.height; y++) bytes.set(p.data.subarray(plotRow(y), plotRow(y) + rowBytes), rgbaAt + y * rowBytes);
    for (let y = 0; y < p.height; y += ROWS_A_CALL) {
      const rows = Math.min(ROWS_A_CALL, p.height - y);
      k.paint(cellsAt, cellOfAt, rowOfAt + 4 * y, p.width, rows, rgbaAt + y * rowBytes, lutAt, p.minDb, p.indexPerDb, top, noData);
    }
    for (let y = 0; y < p.height; y++) p.data.set(bytes.subarray(rgbaAt + y * rowBytes, rgbaAt + (y + 1) * rowBytes), plotRow(y));
    return;
  }
  paintPlotCellsJs(p, top);
}

/** Columns painted together: the grid is stored column after column, the image row after row. */
const PAINT_TILE_COLUMNS = 32;

/**
 * Nearest-cell lookup, so a grid made for another size still fills the plot. In tiles of 32 columns: row by
 * row across the whole plot every grid read was a cache miss (the grid is 3.7 MB at 1600×600), column by
 * column every pixel write; a tile keeps both the 32 grid columns and its rows of pixels in cache.
 */
function paintPlotCellsJs(p: PlotPaint, top: number): void {
  const { data: d, db, cellOf, rowOf, lut, minDb, indexPerDb } = p;
  const [nr, ng, nb] = p.noData;
  for (let x0 = 0; x0 < p.width; x0 += PAINT_TILE_COLUMNS) {
    const x1 = Math.min(p.width, x0 + PAINT_TILE_COLUMNS);
    for (let y = 0; y < p.height; y++) {
      const row = rowOf[y];
      let i = ((p.top + y) * p.imageWidth + p.left + x0) * 4;
      for (let x = x0; x < x1; x++, i += 4) {
        const value = db[cellOf[x] + row];
        if (Number.isNaN(value)) {
          d[i] = nr;
          d[i + 1] = ng;
          d[i + 2] = nb;
          continue;
        }
        // min(top, max(0, Math.round(v))) with Math.round(v) = ⌊v + ½⌋, in compares and a truncation.
        const t = (value - minDb) * indexPerDb + 0.5;
        const e = 3 * (t < 1 ? 0 : t >= top ? top : t | 0);
        d[i] = lut[e];
        d[i + 1] = lut[e + 1];
        d[i + 2] = lut[e + 2];
      }
    }
  }
}

/**
 * text.ts's blendCoverage of mask rows [y0, y1) and columns [x0, x1) (already clipped) placed at (left, top),
 * in gridPaint.wat's blendMask, the mask staged in the image memory's work area (free while text is drawn:
 * the plot's paint and the PNG filter use it before and after). False when it did nothing.
 */
export function blendMaskInPlace(
  data: Uint8Array,
  width: number,
  mask: { width: number; height: number; alpha: Uint8Array },
  left: number,
  top: number,
  clip: { x0: number; x1: number; y0: number; y1: number },
  colour: readonly [number, number, number],
  k: number,
): boolean {
  const inPlace = imageMemoryOf(data);
  if (inPlace === null || mask.alpha.length > inPlace.workBytes || !isByte(colour[0]) || !isByte(colour[1]) || !isByte(colour[2])) return false;
  const kernels = instantiate.on(inPlace.memory);
  if (kernels === null) return false;
  new Uint8Array(kernels.memory.buffer, inPlace.workAt, mask.alpha.length).set(mask.alpha);
  const packed = colour[0] | (colour[1] << 8) | (colour[2] << 16);
  (kernels.exports as unknown as GridPaintExports).blendMask(0, 4 * width, left, top, inPlace.workAt, mask.width, clip.x0, clip.x1, clip.y0, clip.y1, packed, k);
  return true;
}
