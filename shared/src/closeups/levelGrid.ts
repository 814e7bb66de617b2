/**
 * The overview spectrogram's levels as data ("tidemark.level-grid/1", issue #16), so the portal reads
 * time, frequency and dBFS under the pointer instead of guessing from colours. Built from the very grid
 * the PNG is painted from; one byte a cell on the PNG's colour scale (SPECTROGRAM_DB_RANGE), column-major
 * like the grid: index = column·rows + row, row 0 the lowest frequency.
 */
import { frequencyAxis, SPECTROGRAM_DB_RANGE } from "../render/spectrogramImage.ts";
import type { SpectrogramGrid } from "../types/analysis.ts";

export const LEVEL_GRID_SCHEMA = "tidemark.level-grid/1";

export interface LevelGridJson {
  schema: typeof LEVEL_GRID_SCHEMA;
  durationSeconds: number;
  columns: number;
  rows: number;
  secondsPerColumn: number;
  frequencyScale: "log" | "linear";
  minHz: number;
  maxHz: number;
  rowCenterHz: number[];
  dbMin: number;
  dbMax: number;
  levels: string;
}

/**
 * 0 = at or below dbMin (and cells without data), 255 = dbMax, linear in dB between (≈ 0.5 dB a step). With
 * the grid's `rows` and `repeatsLeft`, a column known equal to its left neighbour gets that one's bytes
 * copied (most of a 1 s file's grid, issue #22).
 */
export function quantiseLevels(db: Float32Array, dbMin: number, dbMax: number, columnsOf?: { rows: number; repeatsLeft?: Uint8Array }): Uint8Array {
  const out = new Uint8Array(db.length);
  const scale = 255 / (dbMax - dbMin);
  const rows = columnsOf?.rows ?? db.length;
  const repeats = columnsOf?.repeatsLeft;
  for (let start = 0, c = 0; start < db.length; start += rows, c++) {
    if (repeats !== undefined && c > 0 && repeats[c] === 1) {
      out.copyWithin(start, start - rows, start);
      continue;
    }
    const end = Math.min(db.length, start + rows);
    for (let i = start; i < end; i++) {
      const v = db[i];
      if (!(v > dbMin)) continue; // NaN and −∞ stay 0
      const q = Math.round((v - dbMin) * scale);
      out[i] = q > 255 ? 255 : q;
    }
  }
  return out;
}

/** The dB a level byte stands for (the centre of its step). */
export function levelToDb(level: number, dbMin: number, dbMax: number): number {
  return dbMin + (level * (dbMax - dbMin)) / 255;
}

/** `base64` may be the platform's own encoder (the CLI passes Buffer's: the same RFC 4648 text, many times faster). */
export function levelGridJson(grid: SpectrogramGrid, base64: (bytes: Uint8Array) => string = encodeBase64): LevelGridJson {
  const { minDb, maxDb } = SPECTROGRAM_DB_RANGE;
  const axis = frequencyAxis(grid);
  return {
    schema: LEVEL_GRID_SCHEMA,
    durationSeconds: grid.durationSeconds,
    columns: grid.columns,
    rows: grid.rows,
    secondsPerColumn: grid.columns > 0 ? grid.durationSeconds / grid.columns : 0,
    frequencyScale: grid.frequencyScale,
    minHz: round(axis.minHz, 1000),
    maxHz: round(axis.maxHz, 1000),
    rowCenterHz: Array.from(grid.rowFrequencyHz, (hz) => round(hz, 1000)),
    dbMin: minDb,
    dbMax: maxDb,
    levels: base64(quantiseLevels(grid.db, minDb, maxDb, grid)),
  };
}

const ALPHABET = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";

/** RFC 4648 base64 (shared/ has neither Buffer nor btoa). Built in chunks, not one string per byte. */
export function encodeBase64(bytes: Uint8Array): string {
  const parts: string[] = [];
  const CHUNK = 3 * 4096;
  for (let start = 0; start < bytes.length; start += CHUNK) {
    const end = Math.min(bytes.length, start + CHUNK);
    const codes: number[] = [];
    for (let i = start; i < end; i += 3) {
      const a = bytes[i];
      const b = i + 1 < end ? bytes[i + 1] : 0;
      const c = i + 2 < end ? bytes[i + 2] : 0;
      codes.push(ALPHABET.charCodeAt(a >> 2), ALPHABET.charCodeAt(((a & 3) << 4) | (b >> 4)));
      codes.push(i + 1 < end ? ALPHABET.charCodeAt(((b & 15) << 2) | (c >> 6)) : 61);
      codes.push(i + 2 < end ? ALPHABET.charCodeAt(c & 63) : 61);
    }
    parts.push(String.fromCharCode(...codes));
  }
  return parts.join("");
}

function round(x: number, perUnit: number): number {
  return Math.round(x * perUnit) / perUnit;
}
