/**
 * Silence from the 50 ms window levels: the file is silent in a window when every channel's RMS is below
 * the threshold (−60 dBFS by default). Leading, trailing and inner runs of silent windows at least
 * `silenceMinSeconds` long (2 s) are findings; so is a channel that never rises above the threshold while
 * another does (dead channel) — except the LFE of a 5.1/7.1 file, which is often silent by design, unless
 * the profile's `deadChannelIncludesLfe` asks for it.
 */
import type { Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { dbToPower, formatDb } from "./decibels.ts";
import { channelLabel, formatTimestamp } from "./findings.ts";
import type { LevelWindow } from "./levelWindows.ts";

export interface SilenceDetector {
  add(w: LevelWindow): void;
  /** Findings, given the stream's total frames. */
  finish(totalFrames: number): Finding[];
  /** Per channel: whether any window rose above the threshold. */
  readonly channelHasSignal: boolean[];
}

/**
 * `lfeChannel`: the LFE's index (see speakers.ts), left out of the dead-channel check unless the
 * settings include it. Silence itself still counts every channel.
 */
export function createSilenceDetector(
  sampleRateHz: number,
  channels: number,
  settings: Pick<AnalysisSettings, "silenceThresholdDbfs" | "silenceMinSeconds"> & Partial<Pick<AnalysisSettings, "deadChannelIncludesLfe">>,
  lfeChannel: number | null = null,
  onSilentRun: ((startFrame: number, endFrame: number) => void) | null = null,
): SilenceDetector {
  return new WindowSilenceDetector(sampleRateHz, channels, settings, settings.deadChannelIncludesLfe === true ? null : lfeChannel, onSilentRun);
}

class WindowSilenceDetector implements SilenceDetector {
  readonly channelHasSignal: boolean[];
  private readonly thresholdPower: number;
  private readonly minFrames: number;
  private firstSignalFrame: number | null = null;
  /** Start of the current silent run (null while in signal). */
  private silentFrom: number | null = 0;
  private readonly gaps: [number, number][] = [];

  constructor(
    private readonly sampleRateHz: number,
    private readonly channels: number,
    private readonly settings: Pick<AnalysisSettings, "silenceThresholdDbfs" | "silenceMinSeconds">,
    /** Channel exempt from the dead-channel check (the LFE), or null. */
    private readonly exemptChannel: number | null,
    /** Told, window by window, of a silent run once it is long enough to be a finding (close-ups keep its samples). */
    private readonly onSilentRun: ((startFrame: number, endFrame: number) => void) | null,
  ) {
    this.channelHasSignal = new Array<boolean>(channels).fill(false);
    this.thresholdPower = dbToPower(settings.silenceThresholdDbfs);
    this.minFrames = Math.round(settings.silenceMinSeconds * sampleRateHz);
  }

  add(w: LevelWindow): void {
    let isSilent = true;
    for (let c = 0; c < this.channels; c++) {
      if (w.sumSquares[c] / w.frames >= this.thresholdPower) {
        isSilent = false;
        this.channelHasSignal[c] = true;
      }
    }
    if (isSilent) {
      if (this.silentFrom === null) this.silentFrom = w.startFrame;
      const end = w.startFrame + w.frames;
      if (this.onSilentRun && end - this.silentFrom >= this.minFrames) this.onSilentRun(this.silentFrom, end);
      return;
    }
    if (this.firstSignalFrame === null) this.firstSignalFrame = w.startFrame;
    else if (this.silentFrom !== null && w.startFrame - this.silentFrom >= this.minFrames) {
      this.gaps.push([this.silentFrom, w.startFrame]);
    }
    this.silentFrom = null;
  }

  finish(totalFrames: number): Finding[] {
    const fs = this.sampleRateHz;
    const threshold = `${formatDb(this.settings.silenceThresholdDbfs)} dBFS`;
    const findings: Finding[] = [];
    if (this.firstSignalFrame === null) {
      if (totalFrames > 0) {
        findings.push({
          code: "lead-silence",
          severity: "warn",
          channel: null,
          startSeconds: 0,
          endSeconds: totalFrames / fs,
          message: `silent throughout: every channel stays below ${threshold} for all ${(totalFrames / fs).toFixed(2)} s`,
        });
      }
      return findings;
    }
    if (this.firstSignalFrame >= this.minFrames) {
      findings.push(this.span("lead-silence", "info", 0, this.firstSignalFrame, `leading silence below ${threshold}`));
    }
    for (const [from, to] of this.gaps) findings.push(this.span("silent-gap", "warn", from, to, `silent gap below ${threshold}`));
    if (this.silentFrom !== null && totalFrames - this.silentFrom >= this.minFrames) {
      findings.push(this.span("tail-silence", "info", this.silentFrom, totalFrames, `trailing silence below ${threshold}`));
    }
    if (this.channelHasSignal.some(Boolean)) {
      for (let c = 0; c < this.channels; c++) {
        if (this.channelHasSignal[c] || c === this.exemptChannel) continue;
        findings.push({
          code: "dead-channel",
          severity: "fail",
          channel: c,
          startSeconds: 0,
          endSeconds: totalFrames / fs,
          message: `${channelLabel(c)} stays below ${threshold} for the whole file while other channels carry signal`,
        });
      }
    }
    return findings;
  }

  private span(code: Finding["code"], severity: Finding["severity"], from: number, to: number, what: string): Finding {
    const fs = this.sampleRateHz;
    return {
      code,
      severity,
      channel: null,
      startSeconds: from / fs,
      endSeconds: to / fs,
      message: `${what}: ${((to - from) / fs).toFixed(2)} s from ${formatTimestamp(from / fs)} to ${formatTimestamp(to / fs)}`,
    };
  }
}
