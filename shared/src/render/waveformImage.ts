/**
 * The overview strip: the peak envelope (min … max per column over all channels) on a linear
 * amplitude scale, with the −6 dBFS lines, full-scale extremes in the fail colour, and finding ticks on
 * top. It shares the spectrogram's left and right margins (layout.ts), so at equal widths the two
 * images line up in time.
 */
import type { RgbaImage, WaveformEnvelope } from "../types/analysis.ts";
import type { Finding } from "../types/report.ts";
import { timeTicks } from "./axisTicks.ts";
import { drawFindingMarkers, SEVERITY_COLOURS } from "./findingMarkers.ts";
import { plotXOfSeconds, waveformPlotArea, type PlotArea } from "./layout.ts";
import { createImage, fillRect, strokeRectOutside, type Rgb } from "./raster.ts";
import { THEME } from "./spectrogramImage.ts";
import { capHeightPx, drawText } from "./text.ts";

const PLOT_BACKGROUND: Rgb = [20, 27, 36];
/** Sea-glass green: far from the severity colours, calm against the dark ground. */
const ENVELOPE: Rgb = [94, 196, 178];
/** |sample| at or above this is drawn as full scale reached (−0.01 dBFS, the default clip tolerance). */
const FULL_SCALE_THRESHOLD = 10 ** (-0.01 / 20);
const HALF_SCALE = 0.5; // −6.02 dBFS
const LABEL_GAP_PX = 8;
const MARKER_WEDGE_PX = 9;

export interface WaveformImageOptions {
  width: number;
  height: number;
  markers?: Finding[];
}

export function renderWaveformImage(envelope: WaveformEnvelope, options: WaveformImageOptions): RgbaImage {
  checkEnvelope(envelope);
  const plot = waveformPlotArea(options.width, options.height);
  const image = createImage(options.width, options.height, THEME.background);
  fillRect(image, plot.left, plot.top, plot.width, plot.height, PLOT_BACKGROUND);
  drawGuides(image, plot, envelope.durationSeconds);
  drawEnvelope(image, plot, envelope);
  strokeRectOutside(image, plot.left, plot.top, plot.width, plot.height, THEME.frame);
  drawFindingMarkers(image, plot, envelope.durationSeconds, options.markers ?? [], Math.min(MARKER_WEDGE_PX, plot.top - 1));
  return image;
}

function checkEnvelope(e: WaveformEnvelope): void {
  if (!Number.isInteger(e.columns) || e.columns < 1) throw new Error(`waveform envelope needs at least 1 column, got ${e.columns}`);
  if (e.min.length !== e.columns || e.max.length !== e.columns) {
    throw new Error(`waveform envelope min and max must hold columns = ${e.columns} values, got ${e.min.length} and ${e.max.length}`);
  }
}

/** Pixel row of amplitude v (+1 at the top edge, −1 at the bottom). */
function yOf(plot: PlotArea, v: number): number {
  const clamped = Math.max(-1, Math.min(1, v));
  return plot.top + Math.round(((1 - clamped) / 2) * (plot.height - 1));
}

function drawGuides(image: RgbaImage, plot: PlotArea, durationSeconds: number): void {
  const sizePx = plot.height >= 80 ? 15 : 11;
  const cap = capHeightPx(sizePx);
  const labelX = plot.left - 2 - LABEL_GAP_PX;
  const hasRoom = plot.height >= 5 * cap;
  // Full scale (0 dBFS) at the edges, −6 dBFS at half amplitude; the centre line is silence.
  for (const v of [HALF_SCALE, -HALF_SCALE, 0]) {
    fillRect(image, plot.left, yOf(plot, v), plot.width, 1, THEME.gridLine, v === 0 ? 0.22 : 0.1);
  }
  if (hasRoom) {
    drawText(image, "0", labelX, plot.top, THEME.mutedText, { sizePx, align: "right" });
    drawText(image, "0", labelX, plot.top + plot.height - cap, THEME.mutedText, { sizePx, align: "right" });
    for (const v of [HALF_SCALE, -HALF_SCALE]) {
      drawText(image, "-6", labelX, yOf(plot, v) - Math.floor(cap / 2), THEME.mutedText, { sizePx, align: "right" });
    }
    drawText(image, "dBFS", labelX, yOf(plot, 0) - Math.floor(cap / 2), THEME.mutedText, { sizePx, align: "right" });
  }
  // The spectrogram's time gridlines, so the eye can run between the two images.
  const { ticks } = timeTicks(durationSeconds, plot.width, 86);
  for (const t of ticks) {
    const x = plotXOfSeconds(plot, durationSeconds, t.value);
    if (x > plot.left && x < plot.left + plot.width - 1) fillRect(image, x, plot.top, 1, plot.height, THEME.gridLine, 0.08);
  }
}

/** Each pixel column spans the envelope columns that fall in it (a wider envelope is reduced, not sampled). */
function drawEnvelope(image: RgbaImage, plot: PlotArea, e: WaveformEnvelope): void {
  const clip = SEVERITY_COLOURS.fail;
  for (let x = 0; x < plot.width; x++) {
    const c0 = Math.floor((x * e.columns) / plot.width);
    const c1 = Math.max(c0 + 1, Math.floor(((x + 1) * e.columns) / plot.width));
    let lo = Infinity;
    let hi = -Infinity;
    for (let c = c0; c < Math.min(c1, e.columns); c++) {
      if (e.min[c] < lo) lo = e.min[c];
      if (e.max[c] > hi) hi = e.max[c];
    }
    if (!(lo <= hi)) continue; // no samples (NaN columns)
    const top = yOf(plot, hi);
    const bottom = yOf(plot, lo);
    fillRect(image, plot.left + x, top, 1, bottom - top + 1, ENVELOPE);
    if (hi >= FULL_SCALE_THRESHOLD) fillRect(image, plot.left + x, top, 1, 2, clip);
    if (lo <= -FULL_SCALE_THRESHOLD) fillRect(image, plot.left + x, bottom - 1, 1, 2, clip);
  }
}
