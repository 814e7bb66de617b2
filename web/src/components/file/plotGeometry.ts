/**
 * Where the time axis sits inside the server's PNGs, in pixels of the image's natural size.
 * TODO(#7): the spectral renderer is to export these from shared/src/render; until then they are
 * local guesses, named so nobody mistakes them for the contract.
 */
export interface PlotMarginsPx {
  left: number;
  right: number;
  top: number;
  bottom: number;
}

export const LOCAL_SPECTROGRAM_PLOT_MARGINS_PX: PlotMarginsPx = { left: 72, right: 96, top: 36, bottom: 32 };
export const LOCAL_WAVEFORM_PLOT_MARGINS_PX: PlotMarginsPx = { left: 72, right: 96, top: 12, bottom: 6 };

export interface NaturalSize {
  width: number;
  height: number;
}

/** The plot area as CSS percentages of the rendered image, which scales with the page. */
export function plotAreaInset(margins: PlotMarginsPx, size: NaturalSize) {
  const pct = (px: number, of: number) => `${((px / of) * 100).toFixed(4)}%`;
  return {
    left: pct(margins.left, size.width),
    right: pct(margins.right, size.width),
    top: pct(margins.top, size.height),
    bottom: pct(margins.bottom, size.height),
  };
}

/** A finding's span along the time axis, in percent of the plot width; very short ones get a minimum. */
export function markerSpan(startSeconds: number, endSeconds: number | null, durationSeconds: number) {
  const clamp = (v: number) => Math.min(100, Math.max(0, v));
  const left = clamp((startSeconds / durationSeconds) * 100);
  const right = clamp(((endSeconds ?? startSeconds) / durationSeconds) * 100);
  return { leftPercent: left, widthPercent: Math.max(0, right - left) };
}
