/**
 * Where the time axis sits inside the server's PNGs. The renderer exports its fixed pixel margins, so
 * markers are placed in CSS percentages of whatever size the image has.
 */
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
