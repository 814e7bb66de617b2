/**
 * Where the analysis frames of a file fall: FFT sizes and hops, fixed before the first block from the
 * stream's rate and length, so the work (and memory) per file is bounded whatever its duration.
 */
import { isPowerOfTwo } from "./fft.ts";
import { humFftSize } from "./hum.ts";

export interface FrameSchedule {
  frameSize: number;
  hopSize: number;
  /** Frames the schedule will emit for the file (1 for a file shorter than a frame, 0 for an empty one). */
  frameCount: number;
  /**
   * Start of the last frame. Frames start every hopSize samples, and one more ends exactly at the end
   * of the file when the hops fall short of it, so the tail is analysed like the rest.
   */
  lastFrameStart: number;
}

/** First sample of frame k. */
export function frameStart(s: FrameSchedule, k: number): number {
  return Math.min(k * s.hopSize, s.lastFrameStart);
}

/** 2048 at 44.1/48 kHz (issue #4), scaled with the rate so a frame stays ≈ 45 ms and a bin ≈ 23 Hz. */
export function defaultFftSize(sampleRateHz: number): number {
  const octavesFromReference = Math.log2(sampleRateHz / Math.sqrt(44100 * 48000));
  return Math.min(65536, Math.max(64, 2048 * 2 ** Math.round(octavesFromReference)));
}

/** Frames every hopSize samples, plus an end-aligned one if the hops leave a tail. */
export function evenSchedule(totalFrames: number, frameSize: number, hopSize: number): FrameSchedule {
  if (totalFrames <= 0) return { frameSize, hopSize, frameCount: 0, lastFrameStart: 0 };
  if (totalFrames < frameSize) return { frameSize, hopSize, frameCount: 1, lastFrameStart: 0 };
  const span = totalFrames - frameSize;
  const regular = Math.floor(span / hopSize) + 1;
  const hasTail = (regular - 1) * hopSize < span;
  return { frameSize, hopSize, frameCount: regular + (hasTail ? 1 : 0), lastFrameStart: span };
}

/**
 * FFTs per image column, summed over channels, once a file is long enough to need fewer frames than
 * the default hop gives. fft.js takes ≈ 30–45 µs for a 2048-point real transform on this machine, and
 * issue #8 holds the whole pipeline to ≥ 150× realtime, so the spectral part gets a fixed budget:
 * 2 a column (one a channel for stereo) is ≈ 2900 FFTs ≈ 0.1 s at 1600 px, whatever the duration.
 * Past ≈ 60 s at 48 kHz stereo the frames therefore sample the file rather than tile it (600 s: one
 * 43 ms frame every 0.42 s; 3 h: every 7.5 s). The Welch spectrum still averages ≥ 1400 frames a
 * channel (≈ 0.1 dB spread a bin), every column still gets its own frame, and short events between
 * frames (clicks, dropouts) reach the image as finding ticks from the level analysis instead.
 */
export const FFTS_PER_COLUMN = 2;
const MIN_FRAMES_PER_COLUMN_PER_CHANNEL = 1;
/** Short files overlap frames more, up to 7/8, so a few seconds still fill the image smoothly. */
const MAX_OVERLAP_DIVISOR = 8;

export function chooseStftSchedule(o: {
  totalFrames: number;
  fftSize: number;
  columns: number;
  channels: number;
  /** An explicit hop from the settings is taken as is. */
  hopSize: number | null;
  /** Budget overrides (the low-frequency detail analysis, whose frames are 8× longer, needs fewer). */
  fftsPerColumn?: number;
  minFramesPerColumnPerChannel?: number;
  maxOverlapDivisor?: number;
}): FrameSchedule {
  if (!isPowerOfTwo(o.fftSize)) throw new Error(`fftSize must be a power of two > 1, got ${o.fftSize}`);
  if (o.hopSize !== null) {
    if (!Number.isInteger(o.hopSize) || o.hopSize < 1) {
      throw new Error(`hopSize must be a positive integer, got ${o.hopSize}`);
    }
    return evenSchedule(o.totalFrames, o.fftSize, o.hopSize);
  }
  const framesPerColumn = Math.max(
    o.minFramesPerColumnPerChannel ?? MIN_FRAMES_PER_COLUMN_PER_CHANNEL,
    (o.fftsPerColumn ?? FFTS_PER_COLUMN) / o.channels,
  );
  const maxFrames = Math.max(1, Math.round(o.columns * framesPerColumn));
  const span = Math.max(0, o.totalFrames - o.fftSize);
  // Enough frames to give each column one of its own, but no denser than 7/8 overlap…
  let hopSize = Math.min(o.fftSize / 2, Math.max(o.fftSize / (o.maxOverlapDivisor ?? MAX_OVERLAP_DIVISOR), Math.floor(span / o.columns)));
  // …and no more frames than the budget.
  hopSize = Math.max(hopSize, Math.ceil(span / Math.max(1, maxFrames - 1)));
  hopSize = Math.max(1, Math.round(hopSize));
  return evenSchedule(o.totalFrames, o.fftSize, hopSize);
}

/**
 * Long frames for hum and for the low bands: up to this many, non-overlapping, spread evenly over the
 * file. 32 frames put the Welch spread of a bin at ≈ 0.8 dB (4.34 dB/√32; a periodogram bin is
 * exponentially distributed, 4.34 dB spread; common practice), and hum's floor is a median over
 * ≈ 25 such bins. On the ≈ 6 kHz decimated stream these are 4096-point frames: a few milliseconds.
 */
export const LONG_FRAMES_MAX = 32;

/** Null when the file is shorter than one long frame (≈ 0.7 s): no hum estimate then. */
export function chooseLongFrameSchedule(totalFrames: number, sampleRateHz: number): FrameSchedule | null {
  const frameSize = humFftSize(sampleRateHz);
  if (totalFrames < frameSize) return null;
  const fit = Math.floor(totalFrames / frameSize);
  const frameCount = Math.min(LONG_FRAMES_MAX, fit);
  const hopSize = frameCount > 1 ? Math.max(frameSize, Math.floor((totalFrames - frameSize) / (frameCount - 1))) : frameSize;
  // Evenly spread already; the end-aligned extra frame of evenSchedule is not needed for an average.
  const last = (frameCount - 1) * hopSize;
  return { frameSize, hopSize, frameCount, lastFrameStart: last };
}
