import { describe, expect, it } from "vitest";
import { installFontTypesetter } from "../../cli/src/render/fontTypesetter.ts";
import { formatClock, formatHz, timeTicks } from "../../shared/src/render/axisTicks.ts";
import { wracklineColourMap } from "../../shared/src/render/colourMap.ts";
import { SEVERITY_COLOURS } from "../../shared/src/render/findingMarkers.ts";
import { SPECTROGRAM_MARGINS, spectrogramPlotArea, WAVEFORM_MARGINS, waveformPlotArea } from "../../shared/src/render/layout.ts";
import { renderSpectrogramImage, SPECTROGRAM_DB_RANGE, TEXT_SIZE_PX, THEME } from "../../shared/src/render/spectrogramImage.ts";
import { capHeightPx, textWidthPx } from "../../shared/src/render/text.ts";
import { renderWaveformImage } from "../../shared/src/render/waveformImage.ts";
import { spectrogramRowLayout } from "../../shared/src/spectral/spectrogramGrid.ts";
import type { RgbaImage, SpectrogramGrid, WaveformEnvelope } from "../../shared/src/types/analysis.ts";
import type { Finding } from "../../shared/src/types/report.ts";

// The CLI's typesetter (Source Sans 3 through fontkit and Skia): what a scan draws its labels with.
installFontTypesetter();

/** A synthetic grid (no analysis involved): `dbOf(column, row)` fills it. */
function grid(o: {
  columns: number;
  rows: number;
  durationSeconds: number;
  scale?: "log" | "linear";
  dbOf?: (c: number, r: number) => number;
}): SpectrogramGrid {
  const layout = spectrogramRowLayout(o.rows, o.scale ?? "log", 48000, 2048);
  const db = new Float32Array(o.columns * o.rows);
  for (let c = 0; c < o.columns; c++) for (let r = 0; r < o.rows; r++) db[c * o.rows + r] = o.dbOf ? o.dbOf(c, r) : -100;
  return {
    columns: o.columns,
    rows: o.rows,
    db,
    rowFrequencyHz: layout.centresHz,
    frequencyScale: layout.frequencyScale,
    durationSeconds: o.durationSeconds,
    sampleRateHz: 48000,
  };
}

const pixel = (img: RgbaImage, x: number, y: number): [number, number, number] => {
  const i = (y * img.width + x) * 4;
  return [img.data[i], img.data[i + 1], img.data[i + 2]];
};

const sameColour = (a: readonly number[], b: readonly number[]): boolean => a[0] === b[0] && a[1] === b[1] && a[2] === b[2];

/** Pixels in a rectangle that are not the image background: where text or marks were drawn. */
function inkIn(img: RgbaImage, x0: number, y0: number, w: number, h: number): number {
  let n = 0;
  for (let y = y0; y < y0 + h; y++) for (let x = x0; x < x0 + w; x++) if (!sameColour(pixel(img, x, y), THEME.background)) n++;
  return n;
}

describe("renderSpectrogramImage", () => {
  const width = 1600;
  const height = 600;
  const plot = spectrogramPlotArea(width, height);
  const g = grid({ columns: plot.width, rows: plot.height, durationSeconds: 60 });
  const image = renderSpectrogramImage(g, { width, height, title: "Lighthouse Choir Reels / reel-07.wav" });

  it("fills exactly the asked size (default 1600×600), opaque", () => {
    expect([image.width, image.height, image.data.length]).toEqual([1600, 600, 1600 * 600 * 4]);
    for (let i = 3; i < image.data.length; i += 4 * 997) expect(image.data[i]).toBe(255);
  });

  it("draws the 1 kHz label where a log axis from 20 Hz to Nyquist puts 1 kHz", () => {
    // Log axis: y = bottom − log(f/f0)/log(fN/f0)·height, with f0 = max(20 Hz, one bin) (computed here independently).
    const f0 = Math.max(20, 48000 / 2048);
    const y = Math.round(plot.top + plot.height - (Math.log(1000 / f0) / Math.log(24000 / f0)) * plot.height);
    const labelWidth = textWidthPx("1k", TEXT_SIZE_PX);
    const cap = capHeightPx(TEXT_SIZE_PX);
    const right = plot.left - 11;
    expect(inkIn(image, right - labelWidth, y - Math.floor(cap / 2), labelWidth, cap)).toBeGreaterThan(20);
    // Between the 500 and 1k labels the margin stays empty.
    const yBetween = Math.round(plot.top + plot.height - (Math.log(707 / f0) / Math.log(24000 / f0)) * plot.height);
    expect(inkIn(image, 4, yBetween - 3, plot.left - 12, 6)).toBe(0);
  });

  it("labels the time axis in mm:ss, 00:30 under the middle of a minute", () => {
    const x = plot.left + Math.floor(plot.width / 2);
    const top = plot.top + plot.height + 10;
    const w = textWidthPx("00:30", TEXT_SIZE_PX);
    expect(inkIn(image, Math.round(x - w / 2), top, w, capHeightPx(TEXT_SIZE_PX))).toBeGreaterThan(30);
    expect(formatClock(30, 60, 10)).toBe("00:30");
    expect(formatClock(3723, 7200, 60)).toBe("1:02:03");
    expect(formatClock(1.5, 4, 0.5)).toBe("00:01.5");
    expect(timeTicks(3 * 3600, 1432, 100).ticks[1].label).toMatch(/^\d:\d\d:\d\d$/);
  });

  it("draws the dB scale bar from the map's loudest colour at the top to its quietest at the bottom", () => {
    const lut = wracklineColourMap();
    const barX = plot.left + plot.width + 14 + 7;
    expect(pixel(image, barX, plot.top)).toEqual([lut[765], lut[766], lut[767]]);
    expect(pixel(image, barX, plot.top + plot.height - 1)).toEqual([lut[0], lut[1], lut[2]]);
    expect(inkIn(image, barX + 14, plot.top - 8, 50, 16)).toBeGreaterThan(10); // "0" at the top
  });

  it("maps dB through the colour map, clamping outside the scale and greying out empty columns", () => {
    const lut = wracklineColourMap();
    const g2 = grid({
      columns: 4,
      rows: 4,
      durationSeconds: 1,
      dbOf: (c) => [SPECTROGRAM_DB_RANGE.maxDb + 10, SPECTROGRAM_DB_RANGE.minDb - 10, NaN, -Infinity][c],
    });
    const img = renderSpectrogramImage(g2, { width, height });
    const at = (c: number) => pixel(img, plot.left + Math.floor(((c + 0.5) * plot.width) / 4), plot.top + 100);
    expect(at(0)).toEqual([lut[765], lut[766], lut[767]]);
    expect(at(1)).toEqual([lut[0], lut[1], lut[2]]);
    expect(at(2)).toEqual([...THEME.noData]);
    expect(at(3)).toEqual([lut[0], lut[1], lut[2]]);
  });

  it("ticks findings along the top edge at their start time, coloured by severity", () => {
    const finding = (severity: Finding["severity"], startSeconds: number): Finding => ({
      code: "clipping",
      severity,
      channel: 0,
      startSeconds,
      endSeconds: null,
      message: "",
    });
    const img = renderSpectrogramImage(g, { width, height, markers: [finding("warn", 15), finding("fail", 45)] });
    const xOf = (t: number) => plot.left + Math.floor((t / 60) * plot.width);
    expect(pixel(img, xOf(15), plot.top - 2)).toEqual([...SEVERITY_COLOURS.warn]);
    expect(pixel(img, xOf(45), plot.top - 2)).toEqual([...SEVERITY_COLOURS.fail]);
    expect(pixel(img, xOf(30), plot.top - 2)).toEqual([...THEME.background]);
  });

  it("draws a linear axis in round kHz steps", () => {
    const lin = renderSpectrogramImage(grid({ columns: 100, rows: 100, durationSeconds: 5, scale: "linear" }), { width, height });
    // 0 Hz sits on the bottom edge: its label is centred there.
    expect(inkIn(lin, 4, plot.top + plot.height - 7, plot.left - 12, 14)).toBeGreaterThan(10);
    expect(formatHz(12500)).toBe("12.5k");
    expect(formatHz(500)).toBe("500");
  });

  it("refuses a size too small for its axes, and an inconsistent grid", () => {
    expect(() => renderSpectrogramImage(g, { width: 100, height: 600 })).toThrow(/at least 232×116 px .* got 100×600/);
    const broken = { ...g, db: new Float32Array(3) };
    expect(() => renderSpectrogramImage(broken, { width, height })).toThrow(/columns × rows = \d+ values, got 3/);
  });

  it("documents its margins for overlays", () => {
    expect(plot).toEqual({
      left: SPECTROGRAM_MARGINS.leftPx,
      top: SPECTROGRAM_MARGINS.topPx,
      width: width - SPECTROGRAM_MARGINS.leftPx - SPECTROGRAM_MARGINS.rightPx,
      height: height - SPECTROGRAM_MARGINS.topPx - SPECTROGRAM_MARGINS.bottomPx,
    });
  });
});

describe("renderWaveformImage", () => {
  const width = 1600;
  const height = 120;
  const plot = waveformPlotArea(width, height);

  it("lines up in time with the spectrogram at the same width", () => {
    const spectrogramPlot = spectrogramPlotArea(width, 600);
    expect([plot.left, plot.width]).toEqual([spectrogramPlot.left, spectrogramPlot.width]);
    expect(WAVEFORM_MARGINS.leftPx).toBe(SPECTROGRAM_MARGINS.leftPx);
  });

  it("draws each column from its min to its max, full scale reaching the plot's edges", () => {
    const columns = plot.width;
    const envelope: WaveformEnvelope = {
      columns,
      min: new Float32Array(columns).fill(-0.25),
      max: new Float32Array(columns).fill(0.25),
      durationSeconds: 10,
    };
    envelope.min[100] = -1;
    envelope.max[100] = 1;
    const img = renderWaveformImage(envelope, { width, height });
    expect([img.width, img.height]).toEqual([width, height]);
    const envelopeColour = pixel(img, plot.left + 10, plot.top + Math.round(plot.height / 2) + 3);
    // ±0.25 of full scale spans the middle quarter of the plot height (linear amplitude axis).
    expect(sameColour(pixel(img, plot.left + 10, plot.top + Math.round(plot.height * 0.45)), envelopeColour)).toBe(true);
    expect(sameColour(pixel(img, plot.left + 10, plot.top + Math.round(plot.height * 0.2)), envelopeColour)).toBe(false);
    // The full-scale column reaches the top row, marked in the fail colour.
    expect(pixel(img, plot.left + 100, plot.top)).toEqual([...SEVERITY_COLOURS.fail]);
  });

  it("refuses an envelope whose arrays do not match its column count", () => {
    const bad: WaveformEnvelope = { columns: 10, min: new Float32Array(9), max: new Float32Array(10), durationSeconds: 1 };
    expect(() => renderWaveformImage(bad, { width, height })).toThrow(/columns = 10 values, got 9 and 10/);
  });
});
