/**
 * Stereo measures on the first channel pair: the correlation coefficient r = Σxy / √(Σx²·Σy²) over the
 * file and over 1 s windows (zero-lag, not mean-removed, as phase-correlation meters read; common practice),
 * polarity inversion (r near −1), dual mono (bit-identical, or r above the threshold at equal level) and
 * channel imbalance (RMS difference).
 */
import type { Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { dbToPower, formatDb } from "./decibels.ts";
import { channelLabel, formatTimestamp } from "./findings.ts";
import type { LevelWindow } from "./levelWindows.ts";

/** Windows per correlation window: 20 × 50 ms = 1 s. */
const WINDOWS_PER_SECOND = 20;
/** "Equal levels" for dual mono: RMS within 0.5 dB (our choice; the correlation threshold does the work). */
const DUAL_MONO_LEVEL_DB = 0.5;

export interface StereoResult {
  correlation: number | null;
  minWindowCorrelation: number | null;
  isBitIdentical: boolean;
}

export interface StereoAnalyser {
  /** Per-sample part: the bit-identity check (stops comparing at the first difference). */
  push(input: Float32Array[], frames: number): void;
  addWindow(w: LevelWindow): void;
  /** `channelHasSignal` from silence detection: no imbalance or dual-mono verdict on a dead channel. */
  finish(channelHasSignal: boolean[], onFinding: (f: Finding) => void): StereoResult;
}

export function createStereoAnalyser(
  sampleRateHz: number,
  settings: Pick<AnalysisSettings, "dualMonoCorrelation" | "polarityInvertedCorrelation" | "imbalanceDb" | "silenceThresholdDbfs">,
): StereoAnalyser {
  const silentPower = dbToPower(settings.silenceThresholdDbfs);
  let isBitIdentical = true;
  let totalLL = 0;
  let totalRR = 0;
  let totalLR = 0;
  let totalFrames = 0;
  // Current 1 s window and the runs of 1 s windows below the polarity threshold.
  let group = -1;
  let groupLL = 0;
  let groupRR = 0;
  let groupLR = 0;
  let groupFrames = 0;
  let groupStart = 0;
  let groupEnd = 0;
  let minCorrelation: number | null = null;
  const inverted: { start: number; end: number; worst: number }[] = [];

  const closeGroup = () => {
    if (groupFrames === 0) return;
    // Only windows where both channels carry signal say anything about their relation.
    if (groupLL / groupFrames >= silentPower && groupRR / groupFrames >= silentPower) {
      const r = groupLR / Math.sqrt(groupLL * groupRR);
      if (minCorrelation === null || r < minCorrelation) minCorrelation = r;
      if (r < settings.polarityInvertedCorrelation) {
        const last = inverted[inverted.length - 1];
        if (last && last.end === groupStart) {
          last.end = groupEnd;
          last.worst = Math.min(last.worst, r);
        } else inverted.push({ start: groupStart, end: groupEnd, worst: r });
      }
    }
    groupLL = groupRR = groupLR = groupFrames = 0;
  };

  return {
    push(input, frames) {
      if (!isBitIdentical) return;
      const a = input[0];
      const b = input[1];
      for (let i = 0; i < frames; i++) {
        if (a[i] !== b[i]) {
          isBitIdentical = false;
          return;
        }
      }
    },
    addWindow(w) {
      const g = Math.floor(w.index / WINDOWS_PER_SECOND);
      if (g !== group) {
        closeGroup();
        group = g;
        groupStart = w.startFrame;
      }
      groupLL += w.sumSquares[0];
      groupRR += w.sumSquares[1];
      groupLR += w.crossProduct;
      groupFrames += w.frames;
      groupEnd = w.startFrame + w.frames;
      totalLL += w.sumSquares[0];
      totalRR += w.sumSquares[1];
      totalLR += w.crossProduct;
      totalFrames += w.frames;
    },
    finish(channelHasSignal, onFinding) {
      closeGroup();
      const fs = sampleRateHz;
      const duration = totalFrames / fs;
      if (totalLL === 0 || totalRR === 0) return { correlation: null, minWindowCorrelation: minCorrelation, isBitIdentical };
      const r = Math.max(-1, Math.min(1, totalLR / Math.sqrt(totalLL * totalRR)));
      const levelDifferenceDb = 10 * Math.log10(totalLL / totalRR);
      const minText = minCorrelation === null ? "" : ` (lowest over 1 s windows ${(minCorrelation as number).toFixed(3)})`;
      if (r < settings.polarityInvertedCorrelation) {
        onFinding({
          code: "polarity-inverted",
          severity: "warn",
          channel: null,
          startSeconds: 0,
          endSeconds: duration,
          message: `channels 1 and 2 are in opposite polarity: correlation ${r.toFixed(3)} over the file${minText}`,
        });
      } else {
        for (const span of inverted) {
          onFinding({
            code: "polarity-inverted",
            severity: "warn",
            channel: null,
            startSeconds: span.start / fs,
            endSeconds: span.end / fs,
            message: `channels 1 and 2 are in opposite polarity from ${formatTimestamp(span.start / fs)} to ${formatTimestamp(span.end / fs)}: correlation down to ${span.worst.toFixed(3)}`,
          });
        }
      }
      const bothLive = channelHasSignal[0] && channelHasSignal[1];
      if (bothLive && isBitIdentical) {
        onFinding({ code: "dual-mono", severity: "info", channel: null, startSeconds: 0, endSeconds: duration, message: "channels 1 and 2 are bit-identical (mono recorded as stereo)" });
      } else if (bothLive && r > settings.dualMonoCorrelation && Math.abs(levelDifferenceDb) < DUAL_MONO_LEVEL_DB) {
        onFinding({
          code: "dual-mono",
          severity: "info",
          channel: null,
          startSeconds: 0,
          endSeconds: duration,
          message: `channels 1 and 2 carry the same signal: correlation ${r.toFixed(4)}, levels within ${Math.abs(levelDifferenceDb).toFixed(2)} dB`,
        });
      }
      if (bothLive && Math.abs(levelDifferenceDb) > settings.imbalanceDb) {
        const quieter = levelDifferenceDb > 0 ? 1 : 0;
        onFinding({
          code: "channel-imbalance",
          severity: "warn",
          channel: quieter,
          startSeconds: 0,
          endSeconds: duration,
          message: `${channelLabel(quieter)} is ${formatDb(Math.abs(levelDifferenceDb), 2)} dB quieter (RMS) than ${channelLabel(1 - quieter)}; more than ${formatDb(settings.imbalanceDb)} dB`,
        });
      }
      return { correlation: r, minWindowCorrelation: minCorrelation, isBitIdentical };
    },
  };
}
