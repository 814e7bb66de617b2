/**
 * Painting a spectrogram plot (shared/src/render/gridPaint.ts): the WebAssembly kernel gives the very bytes
 * of the JavaScript loop, for cells without data,
 * infinities, levels off either end of the scale, halves where rounding turns, and grids larger and
 * smaller than the plot. The JavaScript's own meaning is checked against the images in
 * spectrogramImage.test.ts.
 */
import { describe, expect, it } from "vitest";
import { wracklineColourMap } from "../../shared/src/render/colourMap.ts";
import { WASM_MODULE_BYTES } from "../../shared/src/render/gridPaint.generated.ts";
import { paintPlotCells, type PlotPaint } from "../../shared/src/render/gridPaint.ts";
import { allocateImageData, imageMemoryOf, paintWorkBytes } from "../../shared/src/render/imageMemory.ts";
import { seededRandom } from "../fixtures/synth.ts";

const MIN_DB = -130;
const MAX_DB = 0;

/** dB cells: mostly within the scale, with NaN, ±∞, values off both ends, and exact rounding halves. */
function cells(n: number, seed: number): Float32Array {
  const random = seededRandom(seed);
  const step = (MAX_DB - MIN_DB) / 255;
  const db = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    const u = random();
    db[i] =
      u < 0.03 ? NaN
      : u < 0.05 ? -Infinity
      : u < 0.06 ? Infinity
      : u < 0.1 ? MIN_DB - 10 * random()
      : u < 0.14 ? MAX_DB + 10 * random()
      : u < 0.3 ? MIN_DB + (Math.floor(random() * 256) + 0.5) * step
      : MIN_DB + (MAX_DB - MIN_DB) * random();
  }
  return db;
}

function plot(columns: number, rows: number, width: number, height: number, seed: number, inImageMemory = false): PlotPaint {
  const left = 7;
  const top = 3;
  const imageWidth = width + left + 5;
  const data = inImageMemory ? allocateImageData(imageWidth, height + top + 4) : new Uint8Array(imageWidth * (height + top + 4) * 4);
  const random = seededRandom(seed + 1);
  for (let i = 0; i < data.length; i++) data[i] = Math.floor(random() * 256);
  const rowOf = Int32Array.from({ length: height }, (_, y) => rows - 1 - Math.min(rows - 1, Math.floor((y * rows) / height)));
  const cellOf = Int32Array.from({ length: width }, (_, x) => Math.min(columns - 1, Math.floor((x * columns) / width)) * rows);
  return { data, imageWidth, left, top, width, height, db: cells(columns * rows, seed), cellOf, rowOf, lut: wracklineColourMap(), minDb: MIN_DB, indexPerDb: 255 / (MAX_DB - MIN_DB), noData: [38, 42, 50] };
}

describe("plot painting", () => {
  it("runs here (WebAssembly present), so the kernel is what is compared", () => {
    expect(WebAssembly.validate(WASM_MODULE_BYTES)).toBe(true);
  });

  // In an image memory (createImage's pixels, imageMemory.ts) a grid of at most a cell a pixel is painted in
  // place; a larger one (1432×53 into 160×60) does not fit its work area and goes through a memory of its own.
  for (const inImageMemory of [false, true])
  for (const [columns, rows, width, height] of [
    [40, 30, 40, 30],
    [1432, 53, 160, 60],
    [13, 7, 61, 29],
    [1, 1, 5, 3],
  ] as const) {
    it(`paint ${columns}×${rows} cells into a ${width}×${height} plot${inImageMemory ? " in an image memory" : ""}: the same bytes, outside the plot untouched`, () => {
      const wasm = plot(columns, rows, width, height, columns + rows, inImageMemory);
      if (inImageMemory) {
        const memory = imageMemoryOf(wasm.data);
        expect(memory).not.toBeNull();
        // Which path runs: in place exactly when the grid and tables fit the work area.
        expect(memory!.workBytes >= paintWorkBytes(columns * rows, width, height, wasm.lut.length)).toBe(columns * rows <= width * height);
      }
      const js = { ...wasm, data: wasm.data.slice() };
      const before = wasm.data.slice();
      paintPlotCells(wasm);
      paintPlotCells(js, false);
      expect(Buffer.compare(Buffer.from(wasm.data), Buffer.from(js.data))).toBe(0);
      // Something was painted, and only R, G, B inside the plot.
      let changed = 0;
      for (let i = 0; i < before.length; i++) {
        if (before[i] === wasm.data[i]) continue;
        const pixel = i >> 2;
        const x = pixel % wasm.imageWidth;
        const y = Math.floor(pixel / wasm.imageWidth);
        expect(i % 4 !== 3 && x >= wasm.left && x < wasm.left + width && y >= wasm.top && y < wasm.top + height).toBe(true);
        changed++;
      }
      expect(changed).toBeGreaterThan(width * height);
    });
  }
});
