/**
 * Where the time axis sits inside the server's PNGs. The renderer exports its fixed pixel margins, so
 * markers are placed in CSS percentages of whatever size the image has.
 */
import type { FindingDto } from "@tidemark/shared/types/api";
import type { Margins } from "@tidemark/shared/render/layout";

export { SPECTROGRAM_MARGINS, WAVEFORM_MARGINS } from "@tidemark/shared/render/layout";
export type { Margins };

export interface NaturalSize {
  width: number;
  height: number;
}

/** The plot area as CSS percentages of the rendered image, which scales with the page. */
export function plotAreaInset(margins: Margins, size: NaturalSize) {
  const pct = (px: number, of: number) => `${((px / of) * 100).toFixed(4)}%`;
  return {
    left: pct(margins.leftPx, size.width),
    right: pct(margins.rightPx, size.width),
    top: pct(margins.topPx, size.height),
    bottom: pct(margins.bottomPx, size.height),
  };
}

/** A finding's span along the time axis, in percent of the plot width; very short ones get a minimum. */
export function markerSpan(startSeconds: number, endSeconds: number | null, durationSeconds: number) {
  const clamp = (v: number) => Math.min(100, Math.max(0, v));
  const left = clamp((startSeconds / durationSeconds) * 100);
  const right = clamp(((endSeconds ?? startSeconds) / durationSeconds) * 100);
  return { leftPercent: left, widthPercent: Math.max(0, right - left) };
}

/** Handles closer than this (in % of the plot width) go to separate lanes so each stays clickable. */
const HANDLE_CLEARANCE_PERCENT = 2;

export type TimedFinding = FindingDto & { startSeconds: number };

interface PlacedFinding {
  finding: TimedFinding;
  leftPercent: number;
  widthPercent: number;
  lane: number;
}

/** Findings on the time axis, each given the first lane where its handle does not collide. */
export function placeFindings(findings: FindingDto[], durationSeconds: number): PlacedFinding[] {
  const timed = findings
    .filter((f): f is TimedFinding => f.startSeconds !== null)
    .map((finding) => ({ finding, ...markerSpan(finding.startSeconds, finding.endSeconds, durationSeconds) }))
    .sort((a, b) => a.leftPercent - b.leftPercent);
  const laneEnds: number[] = [];
  return timed.map((placed) => {
    let lane = laneEnds.findIndex((lastLeft) => placed.leftPercent - lastLeft >= HANDLE_CLEARANCE_PERCENT);
    if (lane === -1) lane = laneEnds.length;
    laneEnds[lane] = placed.leftPercent;
    return { ...placed, lane };
  });
}
