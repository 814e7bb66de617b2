/**
 * The level grid (issue #16): quantisation on the spectrogram's colour scale and base64 per RFC 4648,
 * checked against Node's own Buffer encoder, and the layout the portal reads (column-major, row 0 lowest).
 */
import { describe, expect, it } from "vitest";
import { encodeBase64, levelGridJson, levelToDb, quantiseLevels } from "../../shared/src/closeups/levelGrid.ts";
import { SPECTROGRAM_DB_RANGE } from "../../shared/src/render/spectrogramImage.ts";
import type { SpectrogramGrid } from "../../shared/src/types/analysis.ts";

describe("encodeBase64", () => {
  it("matches Node's Buffer (RFC 4648) for every padding case and long inputs", () => {
    for (const n of [0, 1, 2, 3, 4, 5, 12287, 12288, 12289, 100_000]) {
      const bytes = Uint8Array.from({ length: n }, (_, i) => (i * 73 + 11) & 255);
      expect(encodeBase64(bytes)).toBe(Buffer.from(bytes).toString("base64"));
    }
  });
});

describe("quantiseLevels", () => {
  it("maps dbMin and below (and no data) to 0, dbMax to 255, linear between, within half a step", () => {
    const db = Float32Array.from([-200, -130, -65, 0, 3, NaN, -Infinity, -20]);
    const q = quantiseLevels(db, -130, 0);
    expect(Array.from(q.subarray(0, 7))).toEqual([0, 0, 128, 255, 255, 0, 0]);
    expect(Math.abs(levelToDb(q[7], -130, 0) - -20)).toBeLessThanOrEqual(130 / 255 / 2);
  });
});

describe("levelGridJson", () => {
  it("keeps the grid's layout: columns × rows, column-major, row 0 the lowest frequency", () => {
    const columns = 3;
    const rows = 4;
    const db = new Float32Array(columns * rows).fill(-130);
    db[2 * rows + 1] = -10; // column 2, row 1
    const grid: SpectrogramGrid = {
      columns,
      rows,
      db,
      rowFrequencyHz: Float32Array.from([100, 1000, 10000, 20000]),
      frequencyScale: "linear",
      durationSeconds: 6,
      sampleRateHz: 48000,
    };
    const json = levelGridJson(grid);
    expect(json).toMatchObject({ schema: "tidemark.level-grid/1", columns, rows, secondsPerColumn: 2, dbMin: SPECTROGRAM_DB_RANGE.minDb, dbMax: SPECTROGRAM_DB_RANGE.maxDb });
    expect(json.rowCenterHz).toEqual([100, 1000, 10000, 20000]);
    const levels = Buffer.from(json.levels, "base64");
    expect(levels.length).toBe(12);
    expect(levels.findIndex((v) => v > 0)).toBe(2 * rows + 1);
    expect(Math.abs(levelToDb(levels[2 * rows + 1], json.dbMin, json.dbMax) - -10)).toBeLessThan(0.3);
  });

  it("writes the same JSON with a platform base64 encoder (the CLI passes Node's Buffer)", () => {
    const columns = 40;
    const rows = 31;
    const db = Float32Array.from({ length: columns * rows }, (_, i) => -130 + ((i * 37) % 131));
    const grid: SpectrogramGrid = { columns, rows, db, rowFrequencyHz: Float32Array.from({ length: rows }, (_, r) => 20 * 2 ** (r / 3)), frequencyScale: "log", durationSeconds: 2, sampleRateHz: 48000 };
    let calls = 0;
    const viaBuffer = levelGridJson(grid, (bytes) => {
      calls += 1;
      return Buffer.from(bytes).toString("base64");
    });
    expect(calls).toBe(1);
    expect(JSON.stringify(viaBuffer)).toBe(JSON.stringify(levelGridJson(grid)));
  });
});
