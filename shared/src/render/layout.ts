/**
 * Where the plot sits inside the rendered images. The margins are fixed pixel widths, so the portal can
 * place its own markers over a PNG of any size: x = leftPx + t/duration × (width − leftPx − rightPx).
 * Spectrogram and waveform strip share the horizontal margins, so at equal widths their time axes align.
 */

export interface PlotArea {
  left: number;
  top: number;
  width: number;
  height: number;
}

export interface Margins {
  readonly leftPx: number;
  readonly rightPx: number;
  readonly topPx: number;
  readonly bottomPx: number;
}

/** Left: frequency labels ("20k", "200k"); right: dB scale bar and labels; top: title and finding ticks; bottom: time labels. */
export const SPECTROGRAM_MARGINS: Margins = { leftPx: 72, rightPx: 96, topPx: 36, bottomPx: 32 };
/** Same left and right margins as the spectrogram; top: finding ticks. */
export const WAVEFORM_MARGINS: Margins = { leftPx: 72, rightPx: 96, topPx: 12, bottomPx: 6 };

export const DEFAULT_SPECTROGRAM_SIZE = { width: 1600, height: 600 } as const;
export const DEFAULT_WAVEFORM_SIZE = { width: 1600, height: 120 } as const;

/** Smallest plot that still reads as one. */
const MIN_PLOT_WIDTH_PX = 64;
const MIN_PLOT_HEIGHT_SPECTROGRAM_PX = 48;
const MIN_PLOT_HEIGHT_WAVEFORM_PX = 16;

function plotArea(name: string, m: Margins, minHeightPx: number, width: number, height: number): PlotArea {
  const minWidth = m.leftPx + m.rightPx + MIN_PLOT_WIDTH_PX;
  const minHeight = m.topPx + m.bottomPx + minHeightPx;
  if (!Number.isInteger(width) || width < minWidth || !Number.isInteger(height) || height < minHeight) {
    throw new Error(`${name} image must be at least ${minWidth}×${minHeight} px (whole numbers) to fit its axes, got ${width}×${height}`);
  }
  return { left: m.leftPx, top: m.topPx, width: width - m.leftPx - m.rightPx, height: height - m.topPx - m.bottomPx };
}

export function spectrogramPlotArea(width: number, height: number): PlotArea {
  return plotArea("spectrogram", SPECTROGRAM_MARGINS, MIN_PLOT_HEIGHT_SPECTROGRAM_PX, width, height);
}

export function waveformPlotArea(width: number, height: number): PlotArea {
  return plotArea("waveform", WAVEFORM_MARGINS, MIN_PLOT_HEIGHT_WAVEFORM_PX, width, height);
}

/** Pixel column of time t: the plot's columns each hold duration/width seconds, column 0 starting at t = 0. */
export function plotXOfSeconds(plot: PlotArea, durationSeconds: number, seconds: number): number {
  if (!(durationSeconds > 0)) return plot.left;
  return plot.left + Math.min(plot.width - 1, Math.max(0, Math.floor((seconds / durationSeconds) * plot.width)));
}
