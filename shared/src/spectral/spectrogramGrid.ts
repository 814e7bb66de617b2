/**
 * Aggregates STFT frames into the fixed columns × rows grid of the spectrogram image, in power, so its
 * size (≈ 3 MB at 1600×600) does not depend on the file's length. One accumulator may own only a band
 * of rows: the low rows of a log axis come from a finer analysis (lowFrequencyDetail.ts).
 */
import type { SpectrogramGrid } from "../types/analysis.ts";
import { frameStart, type FrameSchedule } from "./stftSchedule.ts";
import { createGridKernels } from "./gridKernels.ts";

/** Bottom of the log frequency axis: the lower limit of hearing (common practice), or one bin if wider. */
export const LOG_AXIS_MIN_HZ = 20;

/** Where the grid's rows lie in frequency: centres and the edges between them, bottom row first. */
export interface RowLayout {
  rows: number;
  frequencyScale: "log" | "linear";
  centresHz: Float32Array;
  /** rows + 1 values. */
  edgesHz: Float64Array;
}

export function spectrogramRowLayout(
  rows: number,
  frequencyScale: "log" | "linear",
  sampleRateHz: number,
  fftSize: number,
): RowLayout {
  if (!Number.isInteger(rows) || rows < 1) throw new Error(`spectrogram rows must be a positive integer, got ${rows}`);
  const nyquistHz = sampleRateHz / 2;
  const minHz = frequencyScale === "log" ? Math.min(nyquistHz / 2, Math.max(LOG_AXIS_MIN_HZ, sampleRateHz / fftSize)) : 0;
  const at = (t: number): number => (frequencyScale === "log" ? minHz * (nyquistHz / minHz) ** t : t * nyquistHz);
  const centresHz = new Float32Array(rows);
  const edgesHz = new Float64Array(rows + 1);
  for (let r = 0; r <= rows; r++) edgesHz[r] = at(r / rows);
  for (let r = 0; r < rows; r++) centresHz[r] = at((r + 0.5) / rows);
  return { rows, frequencyScale, centresHz, edgesHz };
}

export interface SpectrogramAccumulator {
  /** Adds frame `frameIndex` of the schedule (its window-corrected amplitude² spectrum). */
  addFrame(amplitudeSquared: Float64Array, frameIndex: number): void;
  /**
   * Writes dB for its rows into a full grid's `db` (NaN in columns that got no frame). With
   * `weightOfRow`, a row is instead blended with what `db` already holds: weight 1 replaces it, 0 leaves
   * it (a missing value on either side yields the other).
   */
  writeDb(db: Float32Array, weightOfRow?: (row: number) => number, skip?: Uint8Array): void;
  /**
   * Per column, 1 once some frame reached only one of it and the column to its left; 0 while both were
   * reached by the same frames in the same order, so they hold the same powers. `skip[c] = 1` in writeDb
   * leaves such a column to be copied from the left afterwards (assembleGrid).
   */
  readonly splitFromLeft: Uint8Array;
}

export function createSpectrogramAccumulator(o: {
  columns: number;
  layout: RowLayout;
  /** The rows [rowFrom, rowTo) this accumulator owns. */
  rowFrom: number;
  rowTo: number;
  aggregate: "max" | "mean";
  binHz: number;
  binCount: number;
  /** Multiplies every power (to put a finer analysis on the main one's bandwidth). */
  powerScale: number;
  schedule: FrameSchedule;
  /** Length of the stream in the schedule's samples. */
  totalFrames: number;
  /** "js" runs the JavaScript loops even where the WebAssembly kernels could (tests compare the two). */
  kernels?: "auto" | "js";
}): SpectrogramAccumulator {
  const { columns, layout, rowFrom, rowTo, aggregate, binHz, schedule, totalFrames } = o;
  if (!Number.isInteger(columns) || columns < 1) throw new Error(`spectrogram columns must be a positive integer, got ${columns}`);
  const rows = layout.rows;
  const ownRows = rowTo - rowFrom;
  const lastBin = o.binCount - 1;

  // The powers and the row tables live in the kernels' memory when there are kernels (gridKernels.wat: a
  // short file's frames are too few for V8 to optimise these loops), in plain arrays otherwise.
  const at8 = (bytes: number): number => Math.ceil(bytes / 8) * 8;
  const powerAt = 0;
  const rowPowerAt = at8(powerAt + 4 * columns * ownRows);
  const firstBinAt = rowPowerAt + 8 * ownRows;
  const binCountAt = firstBinAt + 4 * ownRows;
  const fractionAt = at8(binCountAt + 4 * ownRows);
  const spectrumAt = fractionAt + 8 * ownRows;
  const kernels = o.kernels === "js" ? null : createGridKernels(spectrumAt + 8 * o.binCount);
  const buffer = kernels?.memory.buffer;

  // Each row is the mean power of the bins whose centres fall inside it; rows narrower than two bins
  // (the low end of a log axis) interpolate linearly between the two bins around the row centre.
  const rowFirstBin = buffer ? new Int32Array(buffer, firstBinAt, ownRows) : new Int32Array(ownRows);
  const rowBinCount = buffer ? new Int32Array(buffer, binCountAt, ownRows) : new Int32Array(ownRows);
  const rowFraction = buffer ? new Float64Array(buffer, fractionAt, ownRows) : new Float64Array(ownRows);
  for (let i = 0; i < ownRows; i++) {
    const r = rowFrom + i;
    const k0 = Math.ceil(layout.edgesHz[r] / binHz);
    const k1 = Math.min(lastBin + 1, Math.ceil(layout.edgesHz[r + 1] / binHz));
    if (k1 - k0 >= 2) {
      rowFirstBin[i] = k0;
      rowBinCount[i] = k1 - k0;
    } else {
      const position = Math.min(lastBin, layout.centresHz[r] / binHz);
      const below = Math.min(lastBin - 1, Math.floor(position));
      rowFirstBin[i] = below;
      rowFraction[i] = position - below;
    }
  }

  const power = buffer ? new Float32Array(buffer, powerAt, columns * ownRows) : new Float32Array(columns * ownRows);
  const framesInColumn = new Uint32Array(columns);
  const rowPower = buffer ? new Float64Array(buffer, rowPowerAt, ownRows) : new Float64Array(ownRows);
  const spectrum = buffer ? new Float64Array(buffer, spectrumAt, o.binCount) : null;
  const columnsPerSample = totalFrames > 0 ? columns / totalFrames : 0;
  const centreOf = (k: number): number =>
    schedule.frameCount === 1 ? totalFrames / 2 : frameStart(schedule, k) + schedule.frameSize / 2;
  const clampColumn = (c: number): number => Math.min(columns - 1, Math.max(0, c));

  // splitFromLeft[c] = 1 once a frame has reached only one of columns c − 1 and c. While it is 0, the two
  // were reached by the same frames in the same order, so they hold the same powers: writeDb knows that
  // without comparing them (762 000 comparisons at 1600×600, most of a 1 s file's grid time, issue #22).
  const splitFromLeft = new Uint8Array(columns);

  /** Each row's power from a frame's amplitude² spectrum, into rowPower (the JavaScript of gridKernels.wat's rows). */
  const rowPowers = (amplitudeSquared: Float64Array): void => {
    for (let i = 0; i < ownRows; i++) {
      const k0 = rowFirstBin[i];
      const count = rowBinCount[i];
      if (count === 0) {
        const f = rowFraction[i];
        rowPower[i] = (amplitudeSquared[k0] * (1 - f) + amplitudeSquared[k0 + 1] * f) * o.powerScale;
      } else {
        let sum = 0;
        for (let k = k0; k < k0 + count; k++) sum += amplitudeSquared[k];
        rowPower[i] = (sum / count) * o.powerScale;
      }
    }
  };

  /** rowPower into the columns frame `frameIndex` owns. */
  const addRowsToColumns = (frameIndex: number): void => {
    // The frame owns the columns whose centres are nearer to it than to its neighbours, so sparse
    // frames (a short file) still fill every column, and at least the column its centre falls in.
    const centre = centreOf(frameIndex);
    const cellStart = frameIndex === 0 ? 0 : 0.5 * (centreOf(frameIndex - 1) + centre);
    const cellEnd = frameIndex >= schedule.frameCount - 1 ? totalFrames : 0.5 * (centre + centreOf(frameIndex + 1));
    let c0 = clampColumn(Math.ceil(cellStart * columnsPerSample - 0.5));
    let c1 = clampColumn(Math.ceil(cellEnd * columnsPerSample - 0.5) - 1);
    if (c1 < c0) c0 = c1 = clampColumn(Math.floor(centre * columnsPerSample));
    // A column no frame has reached yet holds zeros, so every such column ends up as the first one did:
    // it is copied rather than computed again (a frame of a short file spans several columns, ≈ 8 at 1 s).
    if (c0 > 0) splitFromLeft[c0] = 1;
    if (c1 + 1 < columns) splitFromLeft[c1 + 1] = 1;
    let freshBase = -1;
    for (let c = c0; c <= c1; c++) {
      const base = c * ownRows;
      const fresh = framesInColumn[c] === 0;
      if (fresh && freshBase >= 0) {
        power.copyWithin(base, freshBase, freshBase + ownRows);
      } else if (kernels) {
        if (aggregate === "max") kernels.max(powerAt + 4 * base, rowPowerAt, ownRows);
        else kernels.add(powerAt + 4 * base, rowPowerAt, ownRows);
      } else if (aggregate === "max") {
        for (let i = 0; i < ownRows; i++) if (rowPower[i] > power[base + i]) power[base + i] = rowPower[i];
      } else {
        for (let i = 0; i < ownRows; i++) power[base + i] += rowPower[i];
      }
      if (fresh && freshBase < 0) freshBase = base;
      framesInColumn[c]++;
    }
  };

  return {
    addFrame(amplitudeSquared, frameIndex) {
      if (kernels && spectrum && amplitudeSquared.length >= o.binCount) {
        spectrum.set(amplitudeSquared.length === o.binCount ? amplitudeSquared : amplitudeSquared.subarray(0, o.binCount));
        kernels.rows(spectrumAt, ownRows, firstBinAt, binCountAt, fractionAt, o.powerScale, rowPowerAt);
      } else {
        rowPowers(amplitudeSquared);
      }
      addRowsToColumns(frameIndex);
    },
    splitFromLeft,
    writeDb(db, weightOfRow, skip) {
      const weights = new Float64Array(ownRows).fill(1);
      if (weightOfRow) for (let i = 0; i < ownRows; i++) weights[i] = Math.min(1, Math.max(0, weightOfRow(rowFrom + i)));
      // A frame of a short file spans several columns, which then hold the same powers: the dB of the
      // column to the left is taken again instead of another log10 (the same value, ≈ 9 in 10 cells of a
      // 1 s file). Per row, lastDb is 10·log10(lastPower·lastScale) (lastScale NaN: nothing held yet).
      const lastPower = new Float32Array(ownRows);
      const lastScale = new Float64Array(ownRows).fill(NaN);
      const lastDb = new Float64Array(ownRows);
      // The leading rows this part owns outright (weight 1) do not depend on what is under them: where
      // they equal the column to the left, their dB values are copied from it.
      let owned = 0;
      while (owned < ownRows && weights[owned] === 1) owned++;
      // The last column written here: the skipped ones between it and c are written later, and hold what it
      // holds (every part's splitFromLeft is 0 across them).
      let previous = -1;
      for (let c = 0; c < columns; c++) {
        if (skip !== undefined && skip[c] === 1) continue;
        const n = framesInColumn[c];
        let first = 0;
        if (owned > 0 && previous >= 0 && splitFromLeft[c] === 0) {
          db.copyWithin(c * rows + rowFrom, previous * rows + rowFrom, previous * rows + rowFrom + owned);
          first = owned;
        }
        previous = c;
        const scale = aggregate === "mean" && n > 0 ? 1 / n : 1;
        if (first < owned) {
          ownedRowsDb(db, c * rows + rowFrom, power, c * ownRows, first, owned, n, scale, lastPower, lastScale, lastDb);
          first = owned;
        }
        for (let i = first; i < ownRows; i++) {
          const at = c * rows + rowFrom + i;
          const w = weights[i];
          // A row this part does not draw, over another part's value: nothing to write.
          if (w === 0 && !Number.isNaN(db[at])) continue;
          const p = power[c * ownRows + i];
          const mine = n === 0 ? NaN : p * scale;
          let mineDb: number;
          if (n === 0) mineDb = NaN;
          else if (p === lastPower[i] && scale === lastScale[i]) mineDb = lastDb[i];
          else {
            mineDb = 10 * Math.log10(mine);
            lastPower[i] = p;
            lastScale[i] = scale;
            lastDb[i] = mineDb;
          }
          if (w === 1 || Number.isNaN(db[at])) db[at] = mineDb;
          else if (w > 0 && !Number.isNaN(mineDb)) {
            // Blended in dB, so the look changes evenly across the hand-over; in power where a side is silent.
            db[at] = Number.isFinite(mineDb) && Number.isFinite(db[at]) ? w * mineDb + (1 - w) * db[at] : 10 * Math.log10(w * mine + (1 - w) * 10 ** (db[at] / 10));
          }
        }
      }
    },
  };
}

/**
 * writeDb's cells for rows [from, to) of one column, all of weight 1 (written over whatever is there): what
 * its general loop does for them, in a small function of its own. Most of a grid's cells are these; as part
 * of writeDb's loop they made V8 optimise writeDb three times over a 1 s file, each time dropping the code
 * when the rarer blended rows turned up (issue #22).
 */
function ownedRowsDb(
  db: Float32Array,
  dbBase: number,
  power: Float32Array,
  powerBase: number,
  from: number,
  to: number,
  n: number,
  scale: number,
  lastPower: Float32Array,
  lastScale: Float64Array,
  lastDb: Float64Array,
): void {
  if (n === 0) {
    db.fill(NaN, dbBase + from, dbBase + to);
    return;
  }
  for (let i = from; i < to; i++) {
    const p = power[powerBase + i];
    if (p === lastPower[i] && scale === lastScale[i]) {
      db[dbBase + i] = lastDb[i];
    } else {
      const mineDb = 10 * Math.log10(p * scale);
      lastPower[i] = p;
      lastScale[i] = scale;
      lastDb[i] = mineDb;
      db[dbBase + i] = mineDb;
    }
  }
}

/**
 * The finished grid from accumulators that together own every row, written in order; a part may come
 * with a row weight to blend over the parts before it.
 */
export function assembleGrid(
  parts: Array<{ accumulator: SpectrogramAccumulator; weightOfRow?: (row: number) => number }>,
  columns: number,
  layout: RowLayout,
  durationSeconds: number,
  sampleRateHz: number,
): SpectrogramGrid {
  // The dB values are written on first read: a scan that draws no image never reads them, which saves a
  // 1 s file a third of its spectral time and 3.7 MB (issue #22). Whoever draws pays for them then.
  let db: Float32Array | null = null;
  let repeatsLeft: Uint8Array | null = null;
  return {
    columns,
    rows: layout.rows,
    get repeatsLeft(): Uint8Array {
      if (repeatsLeft === null) void this.db;
      return repeatsLeft as Uint8Array;
    },
    get db(): Float32Array {
      if (db === null) {
        db = new Float32Array(columns * layout.rows).fill(NaN);
        // A column that every part holds as it holds the one to its left comes out as that one does, blends
        // included (the same values in, the same arithmetic): it is copied whole once the others are written.
        // A 1 s file's frames span ≈ 16 columns each, so most of its grid is copied (issue #22).
        const skip = new Uint8Array(columns);
        for (let c = 1; c < columns; c++) skip[c] = parts.every((part) => part.accumulator.splitFromLeft[c] === 0) ? 1 : 0;
        for (const part of parts) part.accumulator.writeDb(db, part.weightOfRow, skip);
        const rows = layout.rows;
        for (let c = 1; c < columns; c++) if (skip[c] === 1) db.copyWithin(c * rows, (c - 1) * rows, c * rows);
        repeatsLeft = skip;
      }
      return db;
    },
    rowFrequencyHz: layout.centresHz,
    frequencyScale: layout.frequencyScale,
    durationSeconds,
    sampleRateHz,
  };
}
