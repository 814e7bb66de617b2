/**
 * The loudness curve (contract §3, schema "tidemark.loudness-curve/1") and its shaping for the chart:
 * kept apart from the chart component so it is tested without a canvas.
 */
import type { FileDetailDto, FindingDto } from "@tidemark/shared/types/api";

export const LOUDNESS_CURVE_SCHEMA = "tidemark.loudness-curve/1";

export interface LoudnessCurve {
  durationSeconds: number;
  stepSeconds: number;
  momentaryLufs: Array<number | null>;
  shortTermLufs: Array<number | null>;
  peakStepSeconds: number;
  samplePeakDbfs: Array<Array<number | null>>;
}

export type ProfileLimits = NonNullable<FileDetailDto["profileLimits"]>;

function isSeries(value: unknown): value is Array<number | null> {
  return Array.isArray(value) && value.every((v) => v === null || (typeof v === "number" && Number.isFinite(v)));
}

export function decodeLoudnessCurve(json: unknown): LoudnessCurve {
  if (typeof json !== "object" || json === null) throw new Error(`loudness curve must be a JSON object, got ${json === null ? "null" : typeof json}`);
  const c = json as Record<string, unknown>;
  if (c.schema !== LOUDNESS_CURVE_SCHEMA) throw new Error(`loudness curve schema must be "${LOUDNESS_CURVE_SCHEMA}", got ${JSON.stringify(c.schema)}`);
  const { stepSeconds, durationSeconds, momentaryLufs, shortTermLufs } = c;
  if (typeof stepSeconds !== "number" || !(stepSeconds > 0) || typeof durationSeconds !== "number" || !(durationSeconds >= 0)) {
    throw new Error(`loudness curve needs stepSeconds > 0 and durationSeconds ≥ 0, got ${String(stepSeconds)} and ${String(durationSeconds)}`);
  }
  if (!isSeries(momentaryLufs) || !isSeries(shortTermLufs) || momentaryLufs.length !== shortTermLufs.length) {
    throw new Error("loudness curve needs momentaryLufs and shortTermLufs as number|null arrays of the same length");
  }
  const peaks = Array.isArray(c.samplePeakDbfs) ? c.samplePeakDbfs.filter(isSeries) : [];
  return {
    durationSeconds,
    stepSeconds,
    momentaryLufs,
    shortTermLufs,
    peakStepSeconds: typeof c.peakStepSeconds === "number" && c.peakStepSeconds > 0 ? c.peakStepSeconds : stepSeconds,
    samplePeakDbfs: peaks,
  };
}

export interface LoudnessBand {
  target: number;
  warnLow: number;
  warnHigh: number;
  failLow: number;
  failHigh: number;
}

/** The profile's integrated-loudness target with its warn and fail tolerances, or null when it sets none. */
export function loudnessBand(limits: FileDetailDto["profileLimits"]): LoudnessBand | null {
  const l = limits?.integratedLufs;
  if (!l) return null;
  return {
    target: l.target,
    warnLow: l.target - l.warnToleranceLu,
    warnHigh: l.target + l.warnToleranceLu,
    failLow: l.target - l.failToleranceLu,
    failHigh: l.target + l.failToleranceLu,
  };
}

/**
 * uPlot's aligned data: x in seconds (each point at its bucket's start, contract §3), then momentary,
 * short-term and, when the profile has a target, the band's upper and lower edges as constant series.
 */
export function curveChartData(curve: LoudnessCurve, band: LoudnessBand | null): Array<Array<number | null>> {
  const n = curve.momentaryLufs.length;
  const xs = new Array<number>(n);
  for (let i = 0; i < n; i++) xs[i] = i * curve.stepSeconds;
  const data: Array<Array<number | null>> = [xs, curve.momentaryLufs, curve.shortTermLufs];
  if (band) data.push(new Array<number>(n).fill(band.warnHigh), new Array<number>(n).fill(band.warnLow));
  return data;
}

/** Times (seconds) where findings start, for the vertical markers; whole-file findings have none. */
export function findingTimes(findings: FindingDto[]): Array<{ id: number; seconds: number; severity: FindingDto["severity"] }> {
  return findings.filter((f) => f.startSeconds !== null).map((f) => ({ id: f.id, seconds: f.startSeconds as number, severity: f.severity }));
}
