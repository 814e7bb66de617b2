/**
 * The spectrogram PNG's pixels: the grid through the Wrackline colour map, with a labelled time axis, a
 * frequency axis (log or linear, as the grid was made), a dB scale bar and finding ticks on top.
 * Layout margins are in layout.ts (SPECTROGRAM_MARGINS) for the portal's overlays.
 */
import type { RgbaImage, SpectrogramGrid } from "../types/analysis.ts";
import type { Finding } from "../types/report.ts";
import { dbTicks, linearFrequencyTicks, logFrequencyTicks, timeTicks } from "./axisTicks.ts";
import { COLOUR_MAP_SIZE, wracklineColourMap } from "./colourMap.ts";
import { drawFindingMarkers } from "./findingMarkers.ts";
import { paintPlotCells } from "./gridPaint.ts";
import { plotXOfSeconds, spectrogramPlotArea, type PlotArea } from "./layout.ts";
import { createImage, fillRect, strokeRectOutside, type Rgb } from "./raster.ts";
import { capHeightPx, drawText, fitTextKeepingEnd, textWidthPx } from "./text.ts";

/**
 * Fixed colour scale, dB re full scale per bin (a full-scale sine's bin reads 0). −130 dB sits under
 * the per-bin dither floor of 16-bit audio (≈ −96 dBFS RMS spread over ~1000 bins: ≈ −125 dB), so
 * every file is drawn on the same scale and two transfers compare at a glance.
 */
export const SPECTROGRAM_DB_RANGE = { minDb: -130, maxDb: 0 } as const;
const DB_TICK_STEP = 20;

/** Font size of every label and the title, px (the em; capitals stand about 11 px). */
export const TEXT_SIZE_PX = 16;
export const THEME = {
  background: [14, 18, 24] as Rgb,
  noData: [38, 42, 50] as Rgb,
  text: [222, 226, 232] as Rgb,
  mutedText: [150, 158, 170] as Rgb,
  frame: [92, 102, 116] as Rgb,
  gridLine: [255, 255, 255] as Rgb,
};
const GRID_LINE_ALPHA = 0.13;
const TICK_LENGTH_PX = 5;
const LABEL_GAP_PX = 4;
const BAR_GAP_PX = 14;
const BAR_WIDTH_PX = 14;
const MARKER_WEDGE_PX = 9;
/** Units sit on the title's line, beside the plot, clear of the top tick labels. */
const UNIT_LABEL_TOP_PX = 7;
const TITLE_CLEARANCE_PX = 8;

export interface SpectrogramImageOptions {
  width: number;
  height: number;
  markers?: Finding[];
  title?: string;
}

export function renderSpectrogramImage(grid: SpectrogramGrid, options: SpectrogramImageOptions): RgbaImage {
  checkGrid(grid);
  const plot = spectrogramPlotArea(options.width, options.height);
  const image = createImage(options.width, options.height, THEME.background);
  paintPlot(image, plot, grid);
  const axis = frequencyAxis(grid);
  drawFrequencyAxis(image, plot, grid, axis);
  drawTimeAxis(image, plot, grid.durationSeconds);
  strokeRectOutside(image, plot.left, plot.top, plot.width, plot.height, THEME.frame);
  drawScaleBar(image, plot);
  if (options.title) {
    const cap = capHeightPx(TEXT_SIZE_PX);
    // Kept clear of the "dBFS" unit, which is centred over the bar just right of the plot.
    const text = fitTextKeepingEnd(options.title, plot.width - 2 * TITLE_CLEARANCE_PX, TEXT_SIZE_PX);
    drawText(image, text, plot.left, Math.min(UNIT_LABEL_TOP_PX, plot.top - MARKER_WEDGE_PX - cap - 2), THEME.text, { sizePx: TEXT_SIZE_PX });
  }
  drawFindingMarkers(image, plot, grid.durationSeconds, options.markers ?? [], MARKER_WEDGE_PX);
  return image;
}

function checkGrid(g: SpectrogramGrid): void {
  if (!Number.isInteger(g.columns) || g.columns < 1 || !Number.isInteger(g.rows) || g.rows < 1) {
    throw new Error(`spectrogram grid must be at least 1×1, got ${g.columns}×${g.rows}`);
  }
  if (g.db.length !== g.columns * g.rows) {
    throw new Error(`spectrogram grid db must hold columns × rows = ${g.columns * g.rows} values, got ${g.db.length}`);
  }
  if (g.rowFrequencyHz.length !== g.rows) {
    throw new Error(`spectrogram grid rowFrequencyHz must hold rows = ${g.rows} values, got ${g.rowFrequencyHz.length}`);
  }
}

function paintPlot(image: RgbaImage, plot: PlotArea, grid: SpectrogramGrid): void {
  const { minDb, maxDb } = SPECTROGRAM_DB_RANGE;
  const rowOf = new Int32Array(plot.height);
  for (let y = 0; y < plot.height; y++) rowOf[y] = grid.rows - 1 - Math.min(grid.rows - 1, Math.floor((y * grid.rows) / plot.height));
  const cellOf = new Int32Array(plot.width);
  for (let x = 0; x < plot.width; x++) cellOf[x] = Math.min(grid.columns - 1, Math.floor((x * grid.columns) / plot.width)) * grid.rows;
  paintPlotCells({
    data: image.data,
    imageWidth: image.width,
    left: plot.left,
    top: plot.top,
    width: plot.width,
    height: plot.height,
    db: grid.db,
    cellOf,
    rowOf,
    lut: wracklineColourMap(),
    minDb,
    indexPerDb: (COLOUR_MAP_SIZE - 1) / (maxDb - minDb),
    noData: THEME.noData,
  });
}

interface FrequencyAxis {
  minHz: number;
  maxHz: number;
  /** 0 at the bottom edge of the plot, 1 at the top. */
  fractionOf(hz: number): number;
}

/** Recovers the axis the grid's rows were laid on from their centre frequencies. */
export function frequencyAxis(grid: SpectrogramGrid): FrequencyAxis {
  const first = grid.rowFrequencyHz[0];
  const last = grid.rowFrequencyHz[grid.rows - 1];
  const nyquistHz = grid.sampleRateHz / 2;
  if (grid.frequencyScale === "log") {
    const step = grid.rows > 1 ? Math.log(last / first) / (grid.rows - 1) : Math.log(nyquistHz / first) * 2;
    const minHz = first * Math.exp(-step / 2);
    const maxHz = last * Math.exp(step / 2);
    const span = Math.log(maxHz / minHz);
    return { minHz, maxHz, fractionOf: (hz) => Math.log(hz / minHz) / span };
  }
  const step = grid.rows > 1 ? (last - first) / (grid.rows - 1) : nyquistHz;
  const minHz = Math.max(0, first - step / 2);
  const maxHz = last + step / 2;
  return { minHz, maxHz, fractionOf: (hz) => (hz - minHz) / (maxHz - minHz) };
}

function drawFrequencyAxis(image: RgbaImage, plot: PlotArea, grid: SpectrogramGrid, axis: FrequencyAxis): void {
  const cap = capHeightPx(TEXT_SIZE_PX);
  const yOf = (hz: number): number => Math.round(plot.top + plot.height - axis.fractionOf(hz) * plot.height);
  const pxOf = (hz: number): number => -yOf(hz);
  const minSpacing = cap + 8;
  const ticks =
    grid.frequencyScale === "log"
      ? logFrequencyTicks(axis.minHz, axis.maxHz, pxOf, minSpacing)
      : linearFrequencyTicks(axis.maxHz, pxOf, minSpacing);
  for (const t of ticks) {
    const y = yOf(t.value);
    if (y < plot.top || y > plot.top + plot.height) continue;
    if (y > plot.top && y < plot.top + plot.height - 1) {
      fillRect(image, plot.left, y, plot.width, 1, THEME.gridLine, GRID_LINE_ALPHA);
    }
    fillRect(image, plot.left - 1 - TICK_LENGTH_PX, y, TICK_LENGTH_PX, 1, THEME.frame);
    drawText(image, t.label, plot.left - 2 - TICK_LENGTH_PX - LABEL_GAP_PX, y - Math.floor(cap / 2), THEME.text, {
      sizePx: TEXT_SIZE_PX,
      align: "right",
    });
  }
  drawText(image, "Hz", plot.left - 2 - TICK_LENGTH_PX - LABEL_GAP_PX, UNIT_LABEL_TOP_PX, THEME.mutedText, {
    sizePx: TEXT_SIZE_PX,
    align: "right",
  });
}

function drawTimeAxis(image: RgbaImage, plot: PlotArea, durationSeconds: number): void {
  const cap = capHeightPx(TEXT_SIZE_PX);
  const widest = textWidthPx(durationSeconds >= 3600 ? "0:00:00.0" : "00:00.0", TEXT_SIZE_PX);
  const { ticks } = timeTicks(durationSeconds, plot.width, widest + 28);
  const labelTop = plot.top + plot.height + 1 + TICK_LENGTH_PX + LABEL_GAP_PX;
  for (const t of ticks) {
    const x = plotXOfSeconds(plot, durationSeconds, t.value);
    if (x > plot.left && x < plot.left + plot.width - 1) {
      fillRect(image, x, plot.top, 1, plot.height, THEME.gridLine, GRID_LINE_ALPHA);
    }
    fillRect(image, x, plot.top + plot.height + 1, 1, TICK_LENGTH_PX, THEME.frame);
    drawText(image, t.label, x, labelTop, THEME.text, { sizePx: TEXT_SIZE_PX, align: "center" });
  }
  if (labelTop + cap > image.height) {
    throw new Error(`spectrogram image height leaves no room for time labels (needs ${labelTop + cap} px)`);
  }
}

/** Vertical colour bar right of the plot, labelled every 20 dB, unit on top. */
function drawScaleBar(image: RgbaImage, plot: PlotArea): void {
  const lut = wracklineColourMap();
  const { minDb, maxDb } = SPECTROGRAM_DB_RANGE;
  const left = plot.left + plot.width + BAR_GAP_PX;
  for (let y = 0; y < plot.height; y++) {
    const fraction = 1 - y / Math.max(1, plot.height - 1);
    const e = 3 * Math.round(fraction * (COLOUR_MAP_SIZE - 1));
    fillRect(image, left, plot.top + y, BAR_WIDTH_PX, 1, [lut[e], lut[e + 1], lut[e + 2]]);
  }
  strokeRectOutside(image, left, plot.top, BAR_WIDTH_PX, plot.height, THEME.frame);
  const cap = capHeightPx(TEXT_SIZE_PX);
  for (const t of dbTicks(minDb, maxDb, DB_TICK_STEP)) {
    const y = Math.round(plot.top + ((maxDb - t.value) / (maxDb - minDb)) * (plot.height - 1));
    fillRect(image, left + BAR_WIDTH_PX + 1, y, 4, 1, THEME.frame);
    drawText(image, t.label, left + BAR_WIDTH_PX + 8, y - Math.floor(cap / 2), THEME.text, { sizePx: TEXT_SIZE_PX });
  }
  drawText(image, "dBFS", left + BAR_WIDTH_PX / 2, UNIT_LABEL_TOP_PX, THEME.mutedText, { sizePx: TEXT_SIZE_PX, align: "center" });
}
