/**
 * The whole file's loudness curve (issue #16, "tidemark.loudness-curve/1"): momentary and short-term
 * LUFS and the per-channel sample-peak envelope, bucketed in the same pass. The loudness values are the
 * meter's own powers at every hop (loudness.ts's LoudnessHopListener), so the curve's maxima are the report's
 * maxMomentaryLufs / maxShortTermLufs whatever hop the meter uses. The sample-peak envelope comes from
 * the level analyser's 50 ms windows (each window's peak counts in the bucket holding it), so the curve
 * adds no per-sample work. Buckets are fixed before the first
 * block from the stream's length: 0.1 s, widened in 0.1 s steps so a file never has more than
 * MAX_CURVE_POINTS; each bucket keeps its maximum.
 */
import { powerToLufs } from "../analysis/loudnessGating.ts";
import type { StreamFormat } from "../types/analysis.ts";

export const LOUDNESS_CURVE_SCHEMA = "tidemark.loudness-curve/1";
export const MAX_CURVE_POINTS = 20_000;
/** Raw spacing: 10 points a second, the short-term meter's rate (EBU Tech 3341 asks for ≥ 10 Hz). */
export const CURVE_BASE_STEP_SECONDS = 0.1;

export interface LoudnessCurve {
  schema: typeof LOUDNESS_CURVE_SCHEMA;
  durationSeconds: number;
  stepSeconds: number;
  momentaryLufs: (number | null)[];
  shortTermLufs: (number | null)[];
  peakStepSeconds: number;
  samplePeakDbfs: (number | null)[][];
}

/** Bucket width for a duration: the smallest multiple of 0.1 s giving ≤ maxPoints buckets. */
export function curveStepSeconds(durationSeconds: number, maxPoints = MAX_CURVE_POINTS): number {
  const multiple = Math.max(1, Math.ceil(durationSeconds / (CURVE_BASE_STEP_SECONDS * maxPoints) - 1e-9));
  return Math.round(multiple * CURVE_BASE_STEP_SECONDS * 1e6) / 1e6;
}

/**
 * Reduces a series to ≤ maxPoints by taking the maximum of each run of `factor` values (NaN = no value).
 * Used to re-bucket a curve; the streaming accumulator below buckets directly.
 */
export function reduceByMax(values: Float64Array, factor: number): Float64Array {
  if (!Number.isInteger(factor) || factor < 1) throw new Error(`reduction factor must be a positive integer, got ${factor}`);
  const out = new Float64Array(Math.ceil(values.length / factor)).fill(NaN);
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    const o = (i / factor) | 0;
    if (!Number.isNaN(v) && !(out[o] >= v)) out[o] = v;
  }
  return out;
}

export interface LoudnessCurveAccumulator {
  /** The loudness meter's hop listener (powers are 0 until the stream is long enough for the window). */
  onHop(endFrame: number, momentaryPower: number, shortTermPower: number): void;
  /** Feeds the sample-peak envelope: a channel's loudest |sample| over a stretch, and its frame. */
  peak(channel: number, amplitude: number, frame: number): void;
  finish(): LoudnessCurve;
}

export function createLoudnessCurveAccumulator(format: Pick<StreamFormat, "sampleRateHz" | "channels" | "totalFrames">, maxPoints = MAX_CURVE_POINTS): LoudnessCurveAccumulator {
  const { sampleRateHz, channels, totalFrames } = format;
  const durationSeconds = totalFrames / sampleRateHz;
  const stepSeconds = curveStepSeconds(durationSeconds, maxPoints);
  const stepFrames = stepSeconds * sampleRateHz;
  const points = Math.max(0, Math.ceil(totalFrames / stepFrames - 1e-9));
  // Power, not LUFS, while streaming: the maximum of powers is the power of the maximum.
  const momentary = new Float64Array(points).fill(-1);
  const shortTerm = new Float64Array(points).fill(-1);
  const peaks = Array.from({ length: channels }, () => new Float32Array(points));
  const bucketOf = (frame: number): number => Math.min(points - 1, Math.max(0, Math.floor(frame / stepFrames)));

  return {
    onHop(endFrame, momentaryPower, shortTermPower) {
      if (points === 0) return;
      // A window belongs to the bucket holding its last sample: the meter reads it at that moment.
      const b = bucketOf(endFrame - 1);
      if (momentaryPower > 0 && momentaryPower > momentary[b]) momentary[b] = momentaryPower;
      if (shortTermPower > 0 && shortTermPower > shortTerm[b]) shortTerm[b] = shortTermPower;
    },
    peak(channel, amplitude, frame) {
      if (points === 0) return;
      const b = bucketOf(frame);
      if (amplitude > peaks[channel][b]) peaks[channel][b] = amplitude;
    },
    finish() {
      const lufs = (series: Float64Array): (number | null)[] =>
        Array.from(series, (p) => {
          if (p < 0) return null;
          const v = powerToLufs(p);
          return Number.isFinite(v) ? round2(v) : null;
        });
      return {
        schema: LOUDNESS_CURVE_SCHEMA,
        durationSeconds,
        stepSeconds,
        momentaryLufs: lufs(momentary),
        shortTermLufs: lufs(shortTerm),
        peakStepSeconds: stepSeconds,
        samplePeakDbfs: peaks.map((p) => Array.from(p, (a) => (a > 0 ? round2(20 * Math.log10(a)) : null))),
      };
    },
  };
}

function round2(x: number): number {
  return Math.round(x * 100) / 100;
}
