/**
 * Dropouts: runs of exact digital zero at least `dropoutMinSeconds` long (1 ms) and shorter than a
 * silence (`silenceMinSeconds`), inside signal: the 50 ms windows just before and just after the run are
 * both above the silence threshold. Zeros at the very start or end of the file are lead/tail silence.
 *
 * Not every such run is a fault. A zero run is `digital-silence` (info), not a `dropout` (fail), when
 *  - the file is born digital: its quietest passages are themselves digital silence — of the quietest
 *    QUIET_SHARE of the 50 ms windows between the first and last signal, at least BORN_DIGITAL_SHARE hold
 *    a run of exact zero (an analogue transfer has its noise floor there, and its dropouts sit in signal); or
 *  - the signal fades into the run or rises out of it: the EDGE_SECONDS just before (or after) the run are
 *    FADE_DB below the 50 ms window beyond them and FLOOR_MARGIN_DB below the file's own noise floor (the
 *    10th percentile of window levels). A dropout cuts the signal at its running level, or at worst at the
 *    noise floor in a pause between syllables; a fade to digital zero passes under the floor first.
 * Decisions wait for the end of the file (born digital is a whole-file property); the candidates are kept
 * up to MAX_CANDIDATES, and any beyond are counted into one closing finding, never dropped silently.
 */
import type { Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { dbToPower, formatDb, powerToDb } from "./decibels.ts";
import { channelLabel, formatTimestamp } from "./findings.ts";
import { FrameGrid } from "./frameGrid.ts";
import { LEVEL_WINDOW_SECONDS, type LevelWindow } from "./levelWindows.ts";
import type { ValueRun } from "./valueRuns.ts";

/** The quietest passages: this share of the inner 50 ms windows (as the noise floor's 10th percentile). */
export const QUIET_SHARE = 0.1;
/** Born digital when at least half of those windows hold digital zero (common practice). */
export const BORN_DIGITAL_SHARE = 0.5;
/** Level histogram of windows: 0.5 dB bins from −200 dBFS; fully zero windows in bin 0. Constant memory. */
const HIST_BIN_DB = 0.5;
const HIST_LOWEST_DB = -200;
const HIST_BINS = 420;
/** The run's edges: the signal this close to it is compared with the window beyond (5 ms). */
const EDGE_SECONDS = 0.005;
/** A fade: the edge at least this far below the neighbouring 50 ms window (common practice) … */
export const FADE_DB = 20;
/** … and this far below the noise floor, where the signal's own pauses never go. */
export const FLOOR_MARGIN_DB = 6;
/** Candidates kept for the end-of-file decision. */
const MAX_CANDIDATES = 10000;

interface Candidate {
  channel: number;
  startFrame: number;
  endFrame: number;
  beforeWindow: number;
  afterWindow: number;
  /** Mean square of the edge just before / after the run; NaN when the samples were not at hand. */
  beforeEdgePower: number;
  afterEdgePower: number;
  beforePower: number;
  afterPower: number;
}

export interface DropoutDetector {
  /** Smallest run length (frames) worth reporting to this detector. */
  readonly minFrames: number;
  /** The block the value-run tracker is about to scan (its runs' edge samples are read from it). */
  beginBlock(input: Float32Array[], frames: number): void;
  /** After the block: keeps its last samples for runs that start at the next block's beginning. */
  endBlock(): void;
  addRun(run: ValueRun): void;
  addWindow(w: LevelWindow): void;
  /** Call after the last window: decides and reports every candidate. */
  finish(): void;
}

export function createDropoutDetector(
  sampleRateHz: number,
  channels: number,
  settings: Pick<AnalysisSettings, "dropoutMinSeconds" | "silenceMinSeconds" | "silenceThresholdDbfs">,
  onFinding: (f: Finding) => void,
  /** Told of each run that may become a finding once the file is judged at the end (close-ups keep its samples). */
  onCandidate: ((startFrame: number, endFrame: number) => void) | null = null,
): DropoutDetector {
  const minFrames = Math.max(1, Math.round(settings.dropoutMinSeconds * sampleRateHz));
  const maxFrames = Math.max(minFrames, Math.round(settings.silenceMinSeconds * sampleRateHz));
  const edgeFrames = Math.max(1, Math.round(EDGE_SECONDS * sampleRateHz));
  const grid = new FrameGrid(sampleRateHz, LEVEL_WINDOW_SECONDS);
  const thresholdPower = dbToPower(settings.silenceThresholdDbfs);
  // Keeps window powers back to the window before the longest possible dropout.
  const ringSize = Math.ceil(settings.silenceMinSeconds / LEVEL_WINDOW_SECONDS) + 8;
  const ring = new Float64Array(ringSize * channels);
  const pending: Candidate[] = [];
  const decided: Candidate[] = [];
  let overflow = 0;
  let overflowFirst = 0;
  let overflowLast = 0;

  // The current block and the tail of the one before (per channel), for edge levels.
  let block: Float32Array[] = [];
  let blockStart = 0;
  let blockFrames = 0;
  const tails = Array.from({ length: channels }, () => new Float32Array(edgeFrames));
  let tailEnd = -1;

  // Born-digital statistics: level histograms of the inner windows (between the first and the last that
  // is not all zero), all of them and those holding a zero run. Windows after the latest signal wait in
  // `trailing` until signal resumes, since trailing zeros are tail silence.
  const allHist = new Uint32Array(HIST_BINS);
  const zeroHist = new Uint32Array(HIST_BINS);
  const trailingAll = new Uint32Array(HIST_BINS);
  const trailingZero = new Uint32Array(HIST_BINS);
  let trailingCount = 0;
  let seenSignal = false;
  /** Zero runs (any length ≥ minFrames) not yet past the windows: [start, end) pairs. */
  const zeroRanges: number[] = [];

  /** Mean square of frames [from, to) of channel c from the block or the saved tail; NaN if not at hand. */
  const edgePower = (c: number, from: number, to: number): number => {
    if (to <= from) return NaN;
    let sum = 0;
    for (let f = from; f < to; f++) {
      let v: number;
      if (f >= blockStart && f < blockStart + blockFrames) v = block[c][f - blockStart];
      else if (f < tailEnd && f >= tailEnd - edgeFrames) v = tails[c][f - (tailEnd - edgeFrames)];
      else return NaN;
      sum += v * v;
    }
    return sum / (to - from);
  };

  const isFade = (edge: number, beyond: number, floor: number): boolean =>
    !Number.isNaN(edge) && edge <= beyond * dbToPower(-FADE_DB) && edge <= floor * dbToPower(-FLOOR_MARGIN_DB);

  const report = (k: Candidate, bornDigital: boolean, floor: number) => {
    const start = k.startFrame / sampleRateHz;
    const end = k.endFrame / sampleRateHz;
    const ms = (((k.endFrame - k.startFrame) / sampleRateHz) * 1000).toFixed(1);
    const where = `${ms} ms of digital zero on ${channelLabel(k.channel)} at ${formatTimestamp(start)} (${k.endFrame - k.startFrame} samples)`;
    const around = `between signal at ${formatDb(powerToDb(k.beforePower))} and ${formatDb(powerToDb(k.afterPower))} dBFS RMS`;
    const faded = isFade(k.beforeEdgePower, k.beforePower, floor) || isFade(k.afterEdgePower, k.afterPower, floor);
    if (bornDigital || faded) {
      const why = bornDigital ? "the file is born digital (its quietest passages are digital silence)" : "the signal fades to silence at the run";
      onFinding({ code: "digital-silence", severity: "info", channel: k.channel, startSeconds: start, endSeconds: end, message: `${where}, ${around}: ${why}, so no dropout` });
    } else {
      onFinding({ code: "dropout", severity: "fail", channel: k.channel, startSeconds: start, endSeconds: end, message: `${where}, ${around}` });
    }
  };

  return {
    minFrames,
    beginBlock(input, frames) {
      block = input;
      blockFrames = frames;
    },
    endBlock() {
      if (blockFrames >= edgeFrames) {
        for (let c = 0; c < channels; c++) tails[c].set(block[c].subarray(blockFrames - edgeFrames, blockFrames));
        tailEnd = blockStart + blockFrames;
      } else if (blockFrames > 0) {
        // A short block: shift the tail along so it still holds the last edgeFrames samples.
        for (let c = 0; c < channels; c++) {
          tails[c].copyWithin(0, blockFrames);
          tails[c].set(block[c].subarray(0, blockFrames), edgeFrames - blockFrames);
        }
        tailEnd = blockStart + blockFrames;
      }
      blockStart += blockFrames;
      blockFrames = 0;
    },
    addRun(run) {
      if (run.value !== 0) return;
      if (run.length >= minFrames && zeroRanges.length < 2 * MAX_CANDIDATES) zeroRanges.push(run.startFrame, run.startFrame + run.length);
      if (run.before === null || run.after === null) return;
      if (run.length < minFrames || run.length >= maxFrames) return;
      const endFrame = run.startFrame + run.length;
      const beforeWindow = grid.cellOf(run.startFrame) - 1;
      if (beforeWindow < 0) return;
      const c = run.channel;
      const afterTo = Math.min(endFrame + edgeFrames, blockStart + blockFrames);
      pending.push({
        channel: c,
        startFrame: run.startFrame,
        endFrame,
        beforeWindow,
        afterWindow: grid.cellOf(endFrame - 1) + 1,
        beforeEdgePower: edgePower(c, Math.max(0, run.startFrame - edgeFrames), run.startFrame),
        afterEdgePower: edgePower(c, endFrame, afterTo),
        beforePower: 0,
        afterPower: 0,
      });
    },
    addWindow(w) {
      let loudest = 0;
      for (let c = 0; c < channels; c++) {
        const p = w.sumSquares[c] / w.frames;
        ring[(w.index % ringSize) * channels + c] = p;
        if (p > loudest) loudest = p;
      }
      // Does a zero run touch this window? Ranges wholly before it are done with.
      const windowEnd = w.startFrame + w.frames;
      let holdsZero = loudest === 0;
      let keep = 0;
      for (let i = 0; i < zeroRanges.length; i += 2) {
        if (zeroRanges[i] < windowEnd && zeroRanges[i + 1] > w.startFrame) holdsZero = true;
        if (zeroRanges[i + 1] > windowEnd) {
          zeroRanges[keep++] = zeroRanges[i];
          zeroRanges[keep++] = zeroRanges[i + 1];
        }
      }
      zeroRanges.length = keep;
      const bin = loudest === 0 ? 0 : Math.min(HIST_BINS - 1, Math.max(0, Math.floor((10 * Math.log10(loudest) - HIST_LOWEST_DB) / HIST_BIN_DB)));
      if (loudest > 0) {
        if (seenSignal && trailingCount > 0) {
          for (let b = 0; b < HIST_BINS; b++) {
            allHist[b] += trailingAll[b];
            zeroHist[b] += trailingZero[b];
          }
          trailingAll.fill(0);
          trailingZero.fill(0);
          trailingCount = 0;
        }
        seenSignal = true;
        allHist[bin]++;
        if (holdsZero) zeroHist[bin]++;
      } else if (seenSignal) {
        trailingAll[bin]++;
        trailingZero[bin]++;
        trailingCount++;
      }
      for (let i = 0; i < pending.length; ) {
        const k = pending[i];
        if (k.afterWindow !== w.index) {
          i++;
          continue;
        }
        pending.splice(i, 1);
        k.beforePower = ring[(k.beforeWindow % ringSize) * channels + k.channel];
        k.afterPower = w.sumSquares[k.channel] / w.frames;
        if (k.beforePower < thresholdPower || k.afterPower < thresholdPower) continue;
        if (decided.length < MAX_CANDIDATES) {
          decided.push(k);
          onCandidate?.(k.startFrame, k.endFrame);
        } else {
          if (overflow === 0) overflowFirst = k.startFrame;
          overflow++;
          overflowLast = k.endFrame;
        }
      }
    },
    finish() {
      // Runs whose following window never came are at the very end of the file: tail, not dropout.
      pending.length = 0;
      const bornDigital = isBornDigital(allHist, zeroHist);
      const floor = floorPower(allHist);
      for (const k of decided) report(k, bornDigital, floor);
      if (overflow > 0) {
        onFinding({
          code: bornDigital ? "digital-silence" : "dropout",
          severity: bornDigital ? "info" : "fail",
          channel: null,
          startSeconds: overflowFirst / sampleRateHz,
          endSeconds: overflowLast / sampleRateHz,
          message: `${overflow} more runs of digital zero inside signal after the first ${MAX_CANDIDATES}, not judged one by one`,
        });
      }
    },
  };
}

/** Of the quietest QUIET_SHARE of windows (whole bins, from the bottom), do at least BORN_DIGITAL_SHARE hold zeros? */
function isBornDigital(allHist: Uint32Array, zeroHist: Uint32Array): boolean {
  let total = 0;
  for (let b = 0; b < allHist.length; b++) total += allHist[b];
  if (total === 0) return false;
  const quiet = Math.max(1, Math.ceil(total * QUIET_SHARE));
  let seen = 0;
  let zeros = 0;
  for (let b = 0; b < allHist.length && seen < quiet; b++) {
    seen += allHist[b];
    zeros += zeroHist[b];
  }
  return zeros >= BORN_DIGITAL_SHARE * seen;
}

/** The noise floor: 10th percentile of the inner windows that are not all zero (as noiseFloor.ts), as power. */
function floorPower(allHist: Uint32Array): number {
  let total = 0;
  for (let b = 1; b < allHist.length; b++) total += allHist[b];
  if (total === 0) return 0;
  const rank = Math.max(1, Math.ceil(total * QUIET_SHARE));
  let seen = 0;
  for (let b = 1; b < allHist.length; b++) {
    seen += allHist[b];
    if (seen >= rank) return 10 ** ((HIST_LOWEST_DB + (b + 1) * HIST_BIN_DB) / 10);
  }
  return 0;
}
