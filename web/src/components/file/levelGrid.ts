/**
 * The overview spectrogram's level grid (contract §2, schema "tidemark.level-grid/1"): one byte per plot
 * pixel, so the read-out under the pointer is the spectrogram's own dBFS value, never a guess from colour.
 */
import type { LevelGridJson } from "@tidemark/shared/closeups/levelGrid";
import type { PlotArea } from "@tidemark/shared/render/layout";

export const LEVEL_GRID_SCHEMA = "tidemark.level-grid/1";

/** The grid as the server sends it (shared/src/closeups/levelGrid.ts), with its levels decoded from base64. */
export type LevelGrid = Omit<LevelGridJson, "schema" | "levels"> & {
  /** columns × rows bytes, column-major (index = column × rows + row); 0 = at or below dbMin, 255 = dbMax. */
  levels: Uint8Array;
};

export interface GridCell {
  column: number;
  row: number;
}

export interface Readout {
  seconds: number;
  frequencyHz: number;
  /** null when the cell is at or below the grid's floor: the read-out says "≤ dbMin". */
  levelDbfs: number | null;
  /** The raw byte, 0–255, which also indexes the colour map. */
  level: number;
}

function finite(value: unknown): value is number {
  return typeof value === "number" && Number.isFinite(value);
}

function decodeBase64(text: string): Uint8Array {
  const binary = atob(text);
  const out = new Uint8Array(binary.length);
  for (let i = 0; i < binary.length; i++) out[i] = binary.charCodeAt(i);
  return out;
}

/** Checks the JSON against the contract and decodes the levels; a mismatch says what was expected. */
export function decodeLevelGrid(json: unknown): LevelGrid {
  if (typeof json !== "object" || json === null) throw new Error(`level grid must be a JSON object, got ${json === null ? "null" : typeof json}`);
  const g = json as Record<string, unknown>;
  if (g.schema !== LEVEL_GRID_SCHEMA) throw new Error(`level grid schema must be "${LEVEL_GRID_SCHEMA}", got ${JSON.stringify(g.schema)}`);
  const { columns, rows, durationSeconds, secondsPerColumn, minHz, maxHz, dbMin, dbMax } = g;
  if (!Number.isInteger(columns) || !Number.isInteger(rows) || (columns as number) < 1 || (rows as number) < 1) {
    throw new Error(`level grid needs whole positive columns and rows, got ${String(columns)} × ${String(rows)}`);
  }
  if (![durationSeconds, secondsPerColumn, minHz, maxHz, dbMin, dbMax].every(finite) || (dbMax as number) <= (dbMin as number)) {
    throw new Error("level grid needs finite durationSeconds, secondsPerColumn, minHz, maxHz and dbMin < dbMax");
  }
  const rowCenterHz = g.rowCenterHz;
  if (!Array.isArray(rowCenterHz) || rowCenterHz.length !== rows || !rowCenterHz.every(finite)) {
    throw new Error(`level grid rowCenterHz must hold ${String(rows)} numbers, got ${Array.isArray(rowCenterHz) ? rowCenterHz.length : typeof rowCenterHz}`);
  }
  if (typeof g.levels !== "string") throw new Error(`level grid levels must be a base64 string, got ${typeof g.levels}`);
  const levels = decodeBase64(g.levels);
  const expected = (columns as number) * (rows as number);
  if (levels.length !== expected) throw new Error(`level grid levels must hold columns × rows = ${expected} bytes, got ${levels.length}`);
  return {
    durationSeconds: durationSeconds as number,
    columns: columns as number,
    rows: rows as number,
    secondsPerColumn: secondsPerColumn as number,
    frequencyScale: g.frequencyScale === "linear" ? "linear" : "log",
    minHz: minHz as number,
    maxHz: maxHz as number,
    rowCenterHz: rowCenterHz as number[],
    dbMin: dbMin as number,
    dbMax: dbMax as number,
    levels,
  };
}

/**
 * The cell under a point given in the same units as `plot` (CSS pixels of the rendered image or PNG
 * pixels): contract §2, col = floor((x − left)/width × columns), row = rows − 1 − floor((y − top)/height × rows).
 * Null outside the plot area.
 */
export function cellAt(grid: Pick<LevelGrid, "columns" | "rows">, plot: PlotArea, x: number, y: number): GridCell | null {
  const fx = (x - plot.left) / plot.width;
  const fy = (y - plot.top) / plot.height;
  if (!(fx >= 0 && fx < 1 && fy >= 0 && fy < 1)) return null;
  return { column: Math.floor(fx * grid.columns), row: grid.rows - 1 - Math.floor(fy * grid.rows) };
}

/** Time at the cell's centre, its row's centre frequency, and its level in dBFS. */
export function readoutOf(grid: LevelGrid, cell: GridCell): Readout {
  const level = grid.levels[cell.column * grid.rows + cell.row];
  return {
    seconds: Math.min(grid.durationSeconds, (cell.column + 0.5) * grid.secondsPerColumn),
    frequencyHz: grid.rowCenterHz[cell.row],
    levelDbfs: level === 0 ? null : grid.dbMin + (level / 255) * (grid.dbMax - grid.dbMin),
    level,
  };
}
