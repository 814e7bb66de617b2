/**
 * Stuck samples: at least `stuckMinSamples` (16) consecutive identical non-zero values. Runs at full scale
 * are clipping, not stuck. A run entered and left by one quantisation step on both sides is how a slow or
 * quiet signal looks after quantisation (a staircase or a flat top), so it is not reported.
 */
import type { StreamFormat } from "../types/analysis.ts";
import type { Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { dbToAmplitude, amplitudeToDb, formatDb } from "./decibels.ts";
import { positiveFullScale } from "./clipping.ts";
import { channelLabel, formatTimestamp } from "./findings.ts";
import type { ValueRun } from "./valueRuns.ts";

/** Float data has no fixed step; 2^-15 (16-bit) is the coarsest source a float file commonly carries. */
const FLOAT_STEP = 2 ** -15;

export interface StuckSampleDetector {
  readonly minFrames: number;
  addRun(run: ValueRun): void;
}

export function createStuckSampleDetector(
  format: StreamFormat,
  settings: Pick<AnalysisSettings, "stuckMinSamples" | "clipToleranceDb">,
  onFinding: (f: Finding) => void,
): StuckSampleDetector {
  const step = (format.encoding === "float" ? FLOAT_STEP : 2 ** (1 - format.bitDepth)) * (1 + 1e-6);
  const clipLevel = Math.fround(dbToAmplitude(-Math.abs(settings.clipToleranceDb)) * positiveFullScale(format));
  const minFrames = Math.max(2, settings.stuckMinSamples);
  const isOneStep = (a: number | null, v: number) => a !== null && Math.abs(a - v) <= step;
  return {
    minFrames,
    addRun(run) {
      if (run.value === 0 || run.length < minFrames) return;
      if (run.value >= clipLevel || run.value <= -Math.fround(dbToAmplitude(-Math.abs(settings.clipToleranceDb)))) return;
      if (isOneStep(run.before, run.value) && isOneStep(run.after, run.value)) return;
      const start = run.startFrame / format.sampleRateHz;
      const end = (run.startFrame + run.length) / format.sampleRateHz;
      onFinding({
        code: "stuck-samples",
        severity: "warn",
        channel: run.channel,
        startSeconds: start,
        endSeconds: end,
        message:
          `${channelLabel(run.channel)} holds the value ${run.value.toPrecision(6)} (${formatDb(amplitudeToDb(Math.abs(run.value)))} dBFS) ` +
          `for ${run.length} samples from ${formatTimestamp(start)}`,
      });
    },
  };
}
