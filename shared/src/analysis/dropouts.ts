/**
 * Dropouts: runs of exact digital zero at least `dropoutMinSeconds` long (1 ms) and shorter than a
 * silence (`silenceMinSeconds`), inside signal: the 50 ms windows just before and just after the run are
 * both above the silence threshold. Zeros at the very start or end of the file are lead/tail silence.
 */
import type { Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { dbToPower, formatDb, powerToDb } from "./decibels.ts";
import { channelLabel, formatTimestamp } from "./findings.ts";
import { FrameGrid } from "./frameGrid.ts";
import { LEVEL_WINDOW_SECONDS, type LevelWindow } from "./levelWindows.ts";
import type { ValueRun } from "./valueRuns.ts";

interface Candidate {
  channel: number;
  startFrame: number;
  endFrame: number;
  beforeWindow: number;
  afterWindow: number;
}

export interface DropoutDetector {
  /** Smallest run length (frames) worth reporting to this detector. */
  readonly minFrames: number;
  addRun(run: ValueRun): void;
  addWindow(w: LevelWindow): void;
  /** Call after the last window. */
  finish(): void;
}

export function createDropoutDetector(
  sampleRateHz: number,
  channels: number,
  settings: Pick<AnalysisSettings, "dropoutMinSeconds" | "silenceMinSeconds" | "silenceThresholdDbfs">,
  onFinding: (f: Finding) => void,
): DropoutDetector {
  const minFrames = Math.max(1, Math.round(settings.dropoutMinSeconds * sampleRateHz));
  const maxFrames = Math.max(minFrames, Math.round(settings.silenceMinSeconds * sampleRateHz));
  const grid = new FrameGrid(sampleRateHz, LEVEL_WINDOW_SECONDS);
  const thresholdPower = dbToPower(settings.silenceThresholdDbfs);
  // Keeps window powers back to the window before the longest possible dropout.
  const ringSize = Math.ceil(settings.silenceMinSeconds / LEVEL_WINDOW_SECONDS) + 8;
  const ring = new Float64Array(ringSize * channels);
  const pending: Candidate[] = [];

  const decide = (k: Candidate, afterPower: number) => {
    const beforePower = ring[(k.beforeWindow % ringSize) * channels + k.channel];
    if (beforePower < thresholdPower || afterPower < thresholdPower) return;
    const start = k.startFrame / sampleRateHz;
    const end = k.endFrame / sampleRateHz;
    onFinding({
      code: "dropout",
      severity: "fail",
      channel: k.channel,
      startSeconds: start,
      endSeconds: end,
      message:
        `${((k.endFrame - k.startFrame) / sampleRateHz * 1000).toFixed(1)} ms of digital zero on ${channelLabel(k.channel)} at ${formatTimestamp(start)} ` +
        `(${k.endFrame - k.startFrame} samples), between signal at ${formatDb(powerToDb(beforePower))} and ${formatDb(powerToDb(afterPower))} dBFS RMS`,
    });
  };

  return {
    minFrames,
    addRun(run) {
      if (run.value !== 0 || run.before === null || run.after === null) return;
      if (run.length < minFrames || run.length >= maxFrames) return;
      const endFrame = run.startFrame + run.length;
      const beforeWindow = grid.cellOf(run.startFrame) - 1;
      if (beforeWindow < 0) return;
      pending.push({ channel: run.channel, startFrame: run.startFrame, endFrame, beforeWindow, afterWindow: grid.cellOf(endFrame - 1) + 1 });
    },
    addWindow(w) {
      for (let c = 0; c < channels; c++) ring[(w.index % ringSize) * channels + c] = w.sumSquares[c] / w.frames;
      for (let i = 0; i < pending.length; ) {
        const k = pending[i];
        if (k.afterWindow === w.index) {
          decide(k, w.sumSquares[k.channel] / w.frames);
          pending.splice(i, 1);
        } else i++;
      }
    },
    finish() {
      // Runs whose following window never came are at the very end of the file: tail, not dropout.
      pending.length = 0;
    },
  };
}
