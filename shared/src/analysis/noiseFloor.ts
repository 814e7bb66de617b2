/**
 * Noise floor estimate: the 10th percentile of the 50 ms window RMS levels (loudest channel per window),
 * in dBFS. Windows of exact digital zero are left out: digital black is not the recording's floor.
 * A fixed histogram of 0.01 dB bins keeps memory constant whatever the file length.
 */
import type { LevelWindow } from "./levelWindows.ts";

/** The quietest 10 % of windows stand for the floor (common practice). */
export const NOISE_FLOOR_PERCENTILE = 0.1;
const BIN_DB = 0.01;
const LOWEST_DB = -240;
const HIGHEST_DB = 20;

export interface NoiseFloorEstimator {
  add(w: LevelWindow): void;
  /** dBFS, or −Infinity when every window was digital zero. */
  finish(): number;
}

export function createNoiseFloorEstimator(channels: number): NoiseFloorEstimator {
  const bins = new Uint32Array(Math.ceil((HIGHEST_DB - LOWEST_DB) / BIN_DB) + 1);
  let count = 0;
  return {
    add(w) {
      let loudest = 0;
      for (let c = 0; c < channels; c++) {
        const p = w.sumSquares[c] / w.frames;
        if (p > loudest) loudest = p;
      }
      if (loudest <= 0) return;
      const db = 10 * Math.log10(loudest);
      const bin = Math.min(bins.length - 1, Math.max(0, Math.floor((db - LOWEST_DB) / BIN_DB)));
      bins[bin]++;
      count++;
    },
    finish() {
      if (count === 0) return -Infinity;
      const rank = Math.max(1, Math.ceil(count * NOISE_FLOOR_PERCENTILE));
      let seen = 0;
      for (let b = 0; b < bins.length; b++) {
        seen += bins[b];
        if (seen >= rank) return LOWEST_DB + (b + 0.5) * BIN_DB;
      }
      return -Infinity;
    },
  };
}
