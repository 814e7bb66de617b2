/** Whole-file sample peak, RMS and DC offset per channel, summed from the 50 ms windows (in order). */
import type { LevelWindow } from "./levelWindows.ts";

export interface ChannelLevelTotals {
  frames: number;
  /** Per channel. */
  sum: Float64Array;
  sumSquares: Float64Array;
  peakAbs: Float64Array;
  peakFrame: Float64Array;
}

export function createChannelLevelTotals(channels: number): ChannelLevelTotals & { add(w: LevelWindow): void } {
  const totals = {
    frames: 0,
    sum: new Float64Array(channels),
    sumSquares: new Float64Array(channels),
    peakAbs: new Float64Array(channels),
    peakFrame: new Float64Array(channels),
    add(w: LevelWindow): void {
      totals.frames += w.frames;
      for (let c = 0; c < channels; c++) {
        totals.sum[c] += w.sum[c];
        totals.sumSquares[c] += w.sumSquares[c];
        if (w.peakAbs[c] > totals.peakAbs[c]) {
          totals.peakAbs[c] = w.peakAbs[c];
          totals.peakFrame[c] = w.peakFrame[c];
        }
      }
    },
  };
  return totals;
}

/** RMS as linear amplitude (no +3 dB sine convention: a full-scale sine reads −3.01 dBFS, common practice). */
export function rmsAmplitude(totals: ChannelLevelTotals, c: number): number {
  return totals.frames > 0 ? Math.sqrt(totals.sumSquares[c] / totals.frames) : 0;
}

/** DC offset: |mean| as a percentage of full scale. */
export function dcOffsetPercent(totals: ChannelLevelTotals, c: number): number {
  return totals.frames > 0 ? (Math.abs(totals.sum[c]) / totals.frames) * 100 : 0;
}
