/**
 * Clipping: a clip event is a run of at least `clipRunSamples` consecutive samples of one polarity at or
 * within `clipToleranceDb` of the format's full scale (common practice: 3 samples, 0.01 dB). Integer full
 * scale is asymmetric: +(2^(b−1) − 1)/2^(b−1) and −1. Float full scale is ±1.0 (values beyond also count).
 * Events less than half a second apart are reported as one clipped region, to keep findings readable.
 */
import type { StreamFormat } from "../types/analysis.ts";
import type { Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { amplitudeToDb, dbToAmplitude, formatDb } from "./decibels.ts";
import { channelLabel, formatTimestamp } from "./findings.ts";

/** Events closer than this are one region in the findings (our choice). */
const CLIP_REGION_GAP_SECONDS = 0.5;

export interface ClipRegion {
  channel: number;
  startFrame: number;
  endFrame: number;
  events: number;
  samples: number;
  longestRun: number;
}

export interface ClipDetector {
  /**
   * `peakBound`, when given, holds per channel a value no |sample| of the block exceeds (e.g. the running
   * true peak): a channel whose bound stays inside full scale cannot clip in this block and is not scanned.
   */
  push(input: Float32Array[], frames: number, peakBound?: Float64Array): void;
  finish(): void;
  /** Per channel: samples inside clip events, and events. */
  readonly clippedSamples: Float64Array;
  readonly clipEvents: Float64Array;
}

/** Largest positive sample value of the format, as decoded (AudioBlock full-scale convention). */
export function positiveFullScale(format: Pick<StreamFormat, "encoding" | "bitDepth">): number {
  return format.encoding === "float" ? 1 : 1 - 2 ** (1 - format.bitDepth);
}

export function createClipDetector(
  format: StreamFormat,
  settings: Pick<AnalysisSettings, "clipRunSamples" | "clipToleranceDb">,
  onRegion: (region: ClipRegion) => void,
): ClipDetector {
  if (!Number.isInteger(settings.clipRunSamples) || settings.clipRunSamples < 1) {
    throw new Error(`clipRunSamples must be a positive integer, got ${settings.clipRunSamples}`);
  }
  return new RunClipDetector(format, settings, onRegion);
}

class RunClipDetector implements ClipDetector {
  readonly clippedSamples: Float64Array;
  readonly clipEvents: Float64Array;
  private readonly positiveThreshold: number;
  private readonly negativeThreshold: number;
  /** |x| below this is inside both thresholds. */
  private readonly insideBelow: number;
  private readonly minRun: number;
  private readonly regionGapFrames: number;
  /** Per channel: polarity of the current run (1, −1, 0 none), its start, and the open region. */
  private readonly runSign: Int8Array;
  private readonly runStart: Float64Array;
  private readonly regions: (ClipRegion | null)[];
  private position = 0;

  constructor(
    format: StreamFormat,
    settings: Pick<AnalysisSettings, "clipRunSamples" | "clipToleranceDb">,
    private readonly onRegion: (region: ClipRegion) => void,
  ) {
    const tolerance = dbToAmplitude(-Math.abs(settings.clipToleranceDb));
    // Float32 rounding of the threshold must not exclude a sample exactly at full scale.
    this.positiveThreshold = Math.fround(positiveFullScale(format) * tolerance);
    this.negativeThreshold = -Math.fround(tolerance);
    this.insideBelow = Math.min(this.positiveThreshold, -this.negativeThreshold);
    this.minRun = settings.clipRunSamples;
    this.regionGapFrames = Math.round(CLIP_REGION_GAP_SECONDS * format.sampleRateHz);
    const n = format.channels;
    this.clippedSamples = new Float64Array(n);
    this.clipEvents = new Float64Array(n);
    this.runSign = new Int8Array(n);
    this.runStart = new Float64Array(n);
    this.regions = new Array<ClipRegion | null>(n).fill(null);
  }

  push(input: Float32Array[], frames: number, peakBound?: Float64Array): void {
    for (let c = 0; c < input.length && c < this.runSign.length; c++) {
      if (frames > 0 && peakBound !== undefined && peakBound[c] < this.insideBelow) {
        // No sample of the block is clipped: a run left open by the last block ends at its first sample.
        if (this.runSign[c] !== 0) this.closeRun(c, this.runStart[c], this.position);
        this.runSign[c] = 0;
      } else this.scan(c, input[c], frames);
    }
    this.position += frames;
  }

  private scan(c: number, x: Float32Array, frames: number): void {
    const hi = this.positiveThreshold;
    const lo = this.negativeThreshold;
    const inside = this.insideBelow;
    const base = this.position;
    let sign = this.runSign[c];
    let start = this.runStart[c];
    let i = 0;
    while (i < frames) {
      if (sign === 0) {
        // Common case: skip samples inside full scale, one |x| compare each (then the exact test).
        while (i < frames && (Math.abs(x[i]) < inside || (x[i] < hi && x[i] > lo))) i++;
        if (i === frames) break;
        sign = x[i] >= hi ? 1 : -1;
        start = base + i;
        i++;
      }
      const inRun = sign > 0 ? hi : lo;
      if (sign > 0) while (i < frames && x[i] >= inRun) i++;
      else while (i < frames && x[i] <= inRun) i++;
      if (i === frames) break;
      this.closeRun(c, start, base + i);
      sign = 0;
    }
    this.runSign[c] = sign;
    this.runStart[c] = start;
  }

  private closeRun(c: number, start: number, end: number): void {
    const length = end - start;
    if (length < this.minRun) return;
    this.clippedSamples[c] += length;
    this.clipEvents[c]++;
    const open = this.regions[c];
    if (open && start - open.endFrame <= this.regionGapFrames) {
      open.endFrame = end;
      open.events++;
      open.samples += length;
      if (length > open.longestRun) open.longestRun = length;
      return;
    }
    if (open) this.onRegion(open);
    this.regions[c] = { channel: c, startFrame: start, endFrame: end, events: 1, samples: length, longestRun: length };
  }

  finish(): void {
    for (let c = 0; c < this.runSign.length; c++) {
      if (this.runSign[c] !== 0) this.closeRun(c, this.runStart[c], this.position);
      this.runSign[c] = 0;
      const open = this.regions[c];
      if (open) this.onRegion(open);
      this.regions[c] = null;
    }
  }
}

export function clipRegionFinding(region: ClipRegion, sampleRateHz: number): Finding {
  const startSeconds = region.startFrame / sampleRateHz;
  const endSeconds = region.endFrame / sampleRateHz;
  const span = region.events > 1 ? `${region.events} clipped runs from ${formatTimestamp(startSeconds)} to ${formatTimestamp(endSeconds)}` : `clipped run at ${formatTimestamp(startSeconds)}`;
  return {
    code: "clipping",
    severity: "fail",
    channel: region.channel,
    startSeconds,
    endSeconds,
    message: `${span} on ${channelLabel(region.channel)}: ${region.samples} samples at full scale, longest run ${region.longestRun} samples`,
  };
}

/** `near-clip`: a channel peaks above the threshold but has no clip event. */
export function nearClipFinding(
  channel: number,
  peakAmplitude: number,
  peakFrame: number,
  clipEvents: number,
  nearClipDbfs: number,
  sampleRateHz: number,
): Finding | null {
  const peakDbfs = amplitudeToDb(peakAmplitude);
  if (clipEvents > 0 || !(peakDbfs > nearClipDbfs)) return null;
  const at = peakFrame / sampleRateHz;
  return {
    code: "near-clip",
    severity: "warn",
    channel,
    startSeconds: at,
    endSeconds: at,
    message: `${channelLabel(channel)} peaks at ${formatDb(peakDbfs, 2)} dBFS at ${formatTimestamp(at)}, above ${formatDb(nearClipDbfs, 2)} dBFS, without clipped runs`,
  };
}
