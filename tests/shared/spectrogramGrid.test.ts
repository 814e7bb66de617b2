/**
 * The spectrogram accumulator copies a column no frame has reached yet from the first such column of the
 * same frame instead of computing it again (issue #22). Checked against a reference written here from the
 * accumulator's documented rules: a frame owns the columns whose centres are nearer to it than to its
 * neighbours (at least the one its centre falls in), and a column keeps the max (or the sum, for "mean") of
 * its frames' row powers; the dB grid then follows from those powers alone.
 */
import { describe, expect, it } from "vitest";
import { assembleGrid, createSpectrogramAccumulator, spectrogramRowLayout } from "../../shared/src/spectral/spectrogramGrid.ts";
import { quantiseLevels } from "../../shared/src/closeups/levelGrid.ts";
import { createGridKernels } from "../../shared/src/spectral/gridKernels.ts";
import { chooseStftSchedule, frameStart } from "../../shared/src/spectral/stftSchedule.ts";
import { seededRandom } from "../fixtures/synth.ts";

const RATE = 48000;
const FFT = 2048;
const BINS = FFT / 2 + 1;

function run(totalFrames: number, columns: number, aggregate: "max" | "mean", seed: number) {
  const schedule = chooseStftSchedule({ totalFrames, fftSize: FFT, columns, channels: 2, hopSize: null });
  const layout = spectrogramRowLayout(48, "log", RATE, FFT);
  const acc = createSpectrogramAccumulator({ columns, layout, rowFrom: 0, rowTo: layout.rows, aggregate, binHz: RATE / FFT, binCount: BINS, powerScale: 1, schedule, totalFrames });
  const random = seededRandom(seed);
  const frames: Float64Array[] = [];
  for (let k = 0; k < schedule.frameCount; k++) {
    const spectrum = Float64Array.from({ length: BINS }, () => random() * 1e-3);
    frames.push(spectrum);
    acc.addFrame(spectrum, k);
  }
  const grid = assembleGrid([{ accumulator: acc }], columns, layout, totalFrames / RATE, RATE);
  return { grid, frames, schedule, layout };
}

/** Row power of one frame: mean of the bins whose centres lie in the row, or the interpolation at its centre. */
function rowPowers(spectrum: Float64Array, layout: ReturnType<typeof spectrogramRowLayout>): number[] {
  const binHz = RATE / FFT;
  return Array.from({ length: layout.rows }, (_, r) => {
    const k0 = Math.ceil(layout.edgesHz[r] / binHz);
    const k1 = Math.min(BINS, Math.ceil(layout.edgesHz[r + 1] / binHz));
    if (k1 - k0 >= 2) {
      let sum = 0;
      for (let k = k0; k < k1; k++) sum += spectrum[k];
      return sum / (k1 - k0);
    }
    const position = Math.min(BINS - 1, layout.centresHz[r] / binHz);
    const below = Math.min(BINS - 2, Math.floor(position));
    const f = position - below;
    return spectrum[below] * (1 - f) + spectrum[below + 1] * f;
  });
}

function referenceDb(totalFrames: number, columns: number, aggregate: "max" | "mean", r: ReturnType<typeof run>): Float32Array {
  const { frames, schedule, layout } = r;
  const centre = (k: number): number => (schedule.frameCount === 1 ? totalFrames / 2 : frameStart(schedule, k) + schedule.frameSize / 2);
  const perSample = columns / totalFrames;
  const clamp = (c: number): number => Math.min(columns - 1, Math.max(0, c));
  const power = Array.from({ length: columns }, () => new Array<number>(layout.rows).fill(0));
  const count = new Array<number>(columns).fill(0);
  frames.forEach((spectrum, k) => {
    const rows = rowPowers(spectrum, layout);
    const start = k === 0 ? 0 : 0.5 * (centre(k - 1) + centre(k));
    const end = k >= schedule.frameCount - 1 ? totalFrames : 0.5 * (centre(k) + centre(k + 1));
    let c0 = clamp(Math.ceil(start * perSample - 0.5));
    let c1 = clamp(Math.ceil(end * perSample - 0.5) - 1);
    if (c1 < c0) c0 = c1 = clamp(Math.floor(centre(k) * perSample));
    for (let c = c0; c <= c1; c++) {
      for (let i = 0; i < layout.rows; i++) power[c][i] = aggregate === "max" ? Math.max(power[c][i], rows[i]) : power[c][i] + rows[i];
      count[c]++;
    }
  });
  const db = new Float32Array(columns * layout.rows);
  for (let c = 0; c < columns; c++) {
    for (let i = 0; i < layout.rows; i++) {
      db[c * layout.rows + i] = count[c] === 0 ? NaN : 10 * Math.log10(Math.fround(power[c][i]) * (aggregate === "mean" ? 1 / count[c] : 1));
    }
  }
  return db;
}

describe("spectrogram accumulator", () => {
  it.each([
    ["1 s: each frame spans several columns", RATE, 400, "max"],
    ["1 s, mean of frames", RATE, 400, "mean"],
    ["20 s: about one frame a column", 20 * RATE, 400, "max"],
    ["20 s, mean", 20 * RATE, 400, "mean"],
    ["a file shorter than a frame", 1500, 50, "max"],
  ] as const)("%s: every cell as the reference puts it", (_name, totalFrames, columns, aggregate) => {
    const r = run(totalFrames, columns, aggregate, 7);
    const expected = referenceDb(totalFrames, columns, aggregate, r);
    const db = r.grid.db;
    expect(db.length).toBe(expected.length);
    for (let i = 0; i < db.length; i++) {
      if (Number.isNaN(expected[i])) expect(db[i]).toBeNaN();
      else expect(db[i]).toBeCloseTo(expected[i], 4);
    }
    // Frames did cover several columns each in the short cases, so the copying was exercised.
    if (totalFrames === RATE) expect(r.schedule.frameCount).toBeLessThan(columns / 2);
  });
});

describe("a grid of two parts (the low-frequency detail blended over the main one)", () => {
  /** Two accumulators with their own frames, the second owning the lowest rows and fading out over some. */
  function twoParts(totalFrames: number, columns: number, seed: number) {
    const layout = spectrogramRowLayout(48, "log", RATE, FFT);
    const random = seededRandom(seed);
    const part = (fftSize: number, rowTo: number) => {
      const bins = fftSize / 2 + 1;
      const schedule = chooseStftSchedule({ totalFrames, fftSize, columns, channels: 2, hopSize: null });
      const acc = createSpectrogramAccumulator({ columns, layout, rowFrom: 0, rowTo, aggregate: "max", binHz: RATE / fftSize, binCount: bins, powerScale: 1, schedule, totalFrames });
      for (let k = 0; k < schedule.frameCount; k++) acc.addFrame(Float64Array.from({ length: bins }, () => random() * 1e-3), k);
      return acc;
    };
    const main = part(FFT, layout.rows);
    const detail = part(4 * FFT, 20);
    // Full weight below row 8, fading to 0 at row 16, nothing above.
    const weightOfRow = (row: number): number => (row < 8 ? 1 : Math.max(0, 1 - (row - 8) / 8));
    const parts = [{ accumulator: main }, { accumulator: detail, weightOfRow }];
    return { parts, layout, grid: assembleGrid(parts, columns, layout, totalFrames / RATE, RATE) };
  }

  it.each([
    ["1 s", RATE, 400],
    ["0.3 s", 0.3 * RATE, 400],
    ["20 s", 20 * RATE, 400],
  ] as const)("%s: the columns copied from their left neighbour are the ones every part writes alike", (_name, totalFrames, columns) => {
    const { parts, layout, grid } = twoParts(totalFrames, columns, 3);
    // Every part written into every column, none copied: what the grid must hold.
    const expected = new Float32Array(columns * layout.rows).fill(NaN);
    for (const p of parts) p.accumulator.writeDb(expected, p.weightOfRow);
    const db = grid.db;
    let copied = 0;
    for (let c = 1; c < columns; c++) if (parts.every((p) => p.accumulator.splitFromLeft[c] === 0)) copied++;
    for (let i = 0; i < db.length; i++) {
      if (Number.isNaN(expected[i])) expect(db[i], `cell ${i}`).toBeNaN();
      else expect(db[i], `cell ${i}`).toBe(expected[i]);
    }
    // The short files did copy many of their columns, so the copying was exercised.
    if (totalFrames <= RATE) expect(copied).toBeGreaterThan(columns / 4);
    // The grid says which columns repeat their left neighbour, and they do, bit for bit.
    const repeats = grid.repeatsLeft as Uint8Array;
    let flagged = 0;
    for (let c = 1; c < columns; c++) {
      if (repeats[c] !== 1) continue;
      flagged++;
      const at = c * layout.rows;
      expect(Buffer.compare(Buffer.from(db.buffer, 4 * at, 4 * layout.rows), Buffer.from(db.buffer, 4 * (at - layout.rows), 4 * layout.rows)), `column ${c}`).toBe(0);
    }
    expect(flagged).toBe(copied);
    // The level grid's bytes come out the same with the copying as cell by cell (closeups/levelGrid.ts).
    expect([...quantiseLevels(db, -130, 0, grid)]).toEqual([...quantiseLevels(db, -130, 0)]);
  });
});

describe("the accumulator's WebAssembly kernels (gridKernels.wat)", () => {
  it("load here, so the kernel path is what the comparisons below run", () => {
    expect(createGridKernels(1024)).not.toBeNull();
  });

  it.each([
    ["1 s, max", RATE, 400, "max", 1],
    ["1 s, mean, a power scale", RATE, 400, "mean", 0.37],
    ["20 s, max", 20 * RATE, 300, "max", 1],
    ["a file shorter than a frame", 1500, 50, "mean", 1],
  ] as const)("%s: the very grid the JavaScript loops make", (_name, totalFrames, columns, aggregate, powerScale) => {
    const schedule = chooseStftSchedule({ totalFrames, fftSize: FFT, columns, channels: 2, hopSize: null });
    const layout = spectrogramRowLayout(160, "log", RATE, FFT);
    const make = (kernels: "auto" | "js") =>
      createSpectrogramAccumulator({ columns, layout, rowFrom: 0, rowTo: layout.rows, aggregate, binHz: RATE / FFT, binCount: BINS, powerScale, schedule, totalFrames, kernels });
    const withKernels = make("auto");
    const withJs = make("js");
    const random = seededRandom(totalFrames + columns);
    for (let k = 0; k < schedule.frameCount; k++) {
      // Spread over many decades, as power spectra are, so rounding to float32 matters.
      const spectrum = Float64Array.from({ length: BINS }, () => 10 ** (-12 * random()));
      withKernels.addFrame(spectrum, k);
      withJs.addFrame(spectrum, k);
    }
    const a = assembleGrid([{ accumulator: withKernels }], columns, layout, totalFrames / RATE, RATE).db;
    const b = assembleGrid([{ accumulator: withJs }], columns, layout, totalFrames / RATE, RATE).db;
    expect(Buffer.compare(Buffer.from(a.buffer, a.byteOffset, a.byteLength), Buffer.from(b.buffer, b.byteOffset, b.byteLength))).toBe(0);
    // The log axis's lowest rows are narrower than a bin: the interpolating path ran too.
    expect(layout.edgesHz[1] - layout.edgesHz[0]).toBeLessThan(RATE / FFT);
  });
});
