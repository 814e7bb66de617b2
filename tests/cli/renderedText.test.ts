/**
 * The PNGs as a reader gets them: rendered, encoded by the CLI, decoded again with pngjs (an independent
 * decoder), then checked for the Wrackline colour map and for titles set in the shipped font.
 */
import { readFileSync } from "node:fs";
import path from "node:path";
import { PNG } from "pngjs";
import { describe, expect, it } from "vitest";
import { encodePng } from "../../cli/src/render/encodePng.ts";
import { createFontTypesetter, fontFilePaths, installFontTypesetter, loadTypesetterFonts } from "../../cli/src/render/fontTypesetter.ts";
import { COLOUR_MAP_SIZE, wracklineColourMap } from "../../shared/src/render/colourMap.ts";
import { spectrogramPlotArea } from "../../shared/src/render/layout.ts";
import { renderSpectrogramImage, SPECTROGRAM_DB_RANGE, TEXT_SIZE_PX, THEME } from "../../shared/src/render/spectrogramImage.ts";
import { capHeightPx, type TextCoverage } from "../../shared/src/render/text.ts";
import { spectrogramRowLayout } from "../../shared/src/spectral/spectrogramGrid.ts";
import type { SpectrogramGrid } from "../../shared/src/types/analysis.ts";

installFontTypesetter();
const typesetter = createFontTypesetter(loadTypesetterFonts());

const WIDTH = 1600;
const HEIGHT = 600;
const plot = spectrogramPlotArea(WIDTH, HEIGHT);

/** A grid whose level climbs evenly from the bottom of the dB scale (left) to its top (right). */
function rampGrid(): SpectrogramGrid {
  const columns = plot.width;
  const rows = 64;
  const layout = spectrogramRowLayout(rows, "log", 48000, 2048);
  const db = new Float32Array(columns * rows);
  const { minDb, maxDb } = SPECTROGRAM_DB_RANGE;
  for (let c = 0; c < columns; c++) db.fill(minDb + ((maxDb - minDb) * c) / (columns - 1), c * rows, (c + 1) * rows);
  return { columns, rows, db, rowFrequencyHz: layout.centresHz, frequencyScale: "log", durationSeconds: 10, sampleRateHz: 48000 };
}

function renderedPng(title: string): PNG {
  return PNG.sync.read(encodePng(renderSpectrogramImage(rampGrid(), { width: WIDTH, height: HEIGHT, title })));
}

const rgbAt = (png: PNG, x: number, y: number): [number, number, number] => {
  const i = (y * png.width + x) * 4;
  return [png.data[i], png.data[i + 1], png.data[i + 2]];
};

/** CIE 1976 L* of an 8-bit sRGB colour (IEC 61966-2-1 decoding, CIE 15:2004 lightness). */
function lightness([r8, g8, b8]: readonly number[]): number {
  const lin = (v8: number): number => (v8 / 255 <= 0.04045 ? v8 / 255 / 12.92 : ((v8 / 255 + 0.055) / 1.055) ** 2.4);
  const y = 0.2126 * lin(r8) + 0.7152 * lin(g8) + 0.0722 * lin(b8);
  return 116 * (y > (6 / 29) ** 3 ? Math.cbrt(y) : y / (3 * (6 / 29) ** 2) + 4 / 29) - 16;
}

const isBackground = (c: readonly number[]): boolean => c[0] === THEME.background[0] && c[1] === THEME.background[1] && c[2] === THEME.background[2];

/** The title's band above the plot, clear of the finding ticks and the unit labels at either side. */
const titleBand = { x0: plot.left, x1: plot.left + plot.width - 60, y0: 0, y1: plot.top - 10 };

function titleInk(png: PNG, x0 = titleBand.x0, x1 = titleBand.x1): { ink: number; between: number } {
  let ink = 0;
  let between = 0;
  for (let y = titleBand.y0; y < titleBand.y1; y++) {
    for (let x = x0; x < x1; x++) {
      const c = rgbAt(png, x, y);
      if (isBackground(c)) continue;
      ink++;
      const full = c[0] === THEME.text[0] && c[1] === THEME.text[1] && c[2] === THEME.text[2];
      if (!full) between++;
    }
  }
  return { ink, between };
}

describe("spectrogram PNG colours (decoded with pngjs)", () => {
  const png = renderedPng("ramp.wav");
  const map = wracklineColourMap();
  const entry = (i: number): [number, number, number] => [map[3 * i], map[3 * i + 1], map[3 * i + 2]];
  const midRow = plot.top + Math.floor(plot.height / 2);

  it("paints the bottom of the dB scale with the map's first colour and the top with its last", () => {
    expect(rgbAt(png, plot.left, midRow)).toEqual(entry(0));
    expect(rgbAt(png, plot.left + plot.width - 1, midRow)).toEqual(entry(COLOUR_MAP_SIZE - 1));
    // The map's ends themselves: a near-black umber and a near-white foam.
    expect(lightness(entry(0))).toBeLessThan(10);
    expect(lightness(entry(COLOUR_MAP_SIZE - 1))).toBeGreaterThan(94);
  });

  it("grows lighter from left to right along the level ramp, never darker", () => {
    // Pixels under the faint time gridlines are left out: they are the map's colour lightened on purpose.
    const inMap = new Set(Array.from({ length: COLOUR_MAP_SIZE }, (_, i) => entry(i).join(",")));
    const ls: number[] = [];
    for (let x = plot.left; x < plot.left + plot.width; x++) {
      const c = rgbAt(png, x, midRow);
      if (inMap.has(c.join(","))) ls.push(lightness(c));
    }
    expect(ls.length).toBeGreaterThan(plot.width * 0.95);
    for (let i = 1; i < ls.length; i++) expect(ls[i]).toBeGreaterThanOrEqual(ls[i - 1]);
    // Every tenth of the plot (13 dB) is visibly lighter than the one before.
    const tenth = Math.floor(ls.length / 10);
    for (let k = 1; k < 10; k++) expect(ls[k * tenth] - ls[(k - 1) * tenth]).toBeGreaterThan(4);
  });

  it("draws the scale bar with the same map, loudest at the top", () => {
    const barX = plot.left + plot.width + 14 + 7;
    expect(rgbAt(png, barX, plot.top)).toEqual(entry(COLOUR_MAP_SIZE - 1));
    expect(rgbAt(png, barX, plot.top + plot.height - 1)).toEqual(entry(0));
    expect(lightness(rgbAt(png, barX, plot.top + 10))).toBeGreaterThan(lightness(rgbAt(png, barX, plot.top + plot.height - 10)));
  });
});

describe("titles in the shipped font (decoded with pngjs)", () => {
  const greek = renderedPng("Ωμέγα");
  const latin1 = renderedPng("Café Señor Øre ßàç");
  const missing = renderedPng("中中中中中");

  it("puts ink under each Greek letter, anti-aliased", () => {
    const word = "Ωμέγα";
    let pen = plot.left;
    for (const ch of word) {
      const advance = typesetter.measure(ch, TEXT_SIZE_PX);
      const { ink } = titleInk(greek, Math.floor(pen), Math.ceil(pen + advance));
      expect(ink, `ink under ${ch}`).toBeGreaterThan(15);
      pen += advance;
    }
    // Nothing after the word.
    expect(titleInk(greek, Math.ceil(pen) + 2).ink).toBe(0);
    // Anti-aliased: most inked pixels lie strictly between the background and the text colour.
    const { ink, between } = titleInk(greek);
    expect(between).toBeGreaterThan(ink / 3);
  });

  it("puts ink under each Latin-1 letter", () => {
    let pen = plot.left;
    for (const ch of "Café Señor Øre ßàç") {
      const advance = typesetter.measure(ch, TEXT_SIZE_PX);
      if (ch !== " ") expect(titleInk(latin1, Math.floor(pen), Math.ceil(pen + advance)).ink, `ink under ${ch}`).toBeGreaterThan(10);
      pen += advance;
    }
  });

  it("draws a character no font holds as a box rather than dropping it", () => {
    // Five missing-glyph boxes: ink, and a different picture from the Greek word.
    expect(titleInk(missing).ink).toBeGreaterThan(5 * 30);
    let differing = 0;
    for (let y = titleBand.y0; y < titleBand.y1; y++) {
      for (let x = titleBand.x0; x < titleBand.x0 + 120; x++) {
        const a = rgbAt(greek, x, y);
        const b = rgbAt(missing, x, y);
        if (a[0] !== b[0] || a[1] !== b[1] || a[2] !== b[2]) differing++;
      }
    }
    expect(differing).toBeGreaterThan(100);
  });
});

describe("the font typesetter", () => {
  const inkOf = (c: TextCoverage): number => c.alpha.reduce((s, v) => s + v, 0);
  const same = (a: TextCoverage, b: TextCoverage): boolean =>
    a.width === b.width && a.height === b.height && a.alpha.every((v, i) => v === b.alpha[i]);
  const box = typesetter.rasterise("中", TEXT_SIZE_PX);

  it("ships its font inside the project: SIL Open Font License files from node_modules", () => {
    const files = fontFilePaths();
    expect(files.length).toBeGreaterThanOrEqual(3);
    for (const f of files) {
      expect(f).toMatch(/node_modules[/\\]@fontsource[/\\]source-sans-3[/\\]files[/\\].*\.woff$/);
      expect(readFileSync(f).subarray(0, 4).toString("latin1")).toBe("wOFF"); // WOFF 1.0 signature (W3C, 2012)
    }
    const pkg = JSON.parse(readFileSync(path.join(path.dirname(files[0]), "..", "package.json"), "utf8")) as { license: string };
    expect(pkg.license).toBe("OFL-1.1");
  });

  it("has a glyph of its own for every Latin-1 and Greek letter, and for Latin Extended and Cyrillic ones", () => {
    const letters = [
      ..."ÀÁÂÃÄÅÆÇÈÉÊËÌÍÎÏÐÑÒÓÔÕÖØÙÚÛÜÝÞßàáâãäåæçèéêëìíîïðñòóôõöøùúûüýþÿ",
      ..."ΑΒΓΔΕΖΗΘΙΚΛΜΝΞΟΠΡΣΤΥΦΧΨΩαβγδεζηθικλμνξοπρςστυφχψωάέήίόύώ",
      ..."ŁłŐőČčŠšŽžĘęŚśŻż",
      ..."АБВГДЕЖЗИЙКЛМНОПРСТУФХЦЧШЩЪЫЬЭЮЯабвгдежзийклмнопрстуфхцчшщъыьэюяё",
    ];
    for (const ch of letters) {
      const c = typesetter.rasterise(ch, TEXT_SIZE_PX);
      expect(inkOf(c), `ink of ${ch}`).toBeGreaterThan(0);
      expect(same(c, box), `${ch} drawn as the missing-glyph box`).toBe(false);
    }
  });

  it("draws every missing character as the same visible box", () => {
    expect(inkOf(box)).toBeGreaterThan(255 * 20);
    expect(same(typesetter.rasterise("\u{1F30A}", TEXT_SIZE_PX), box)).toBe(true);
    expect(typesetter.measure("中中", TEXT_SIZE_PX)).toBeGreaterThan(typesetter.measure("中", TEXT_SIZE_PX));
  });

  it("sets a decomposed accent (as macOS stores file names) like the composed letter", () => {
    expect(same(typesetter.rasterise("cafe\u0301", TEXT_SIZE_PX), typesetter.rasterise("café", TEXT_SIZE_PX))).toBe(true);
  });

  it("measures capitals at the font's cap height (Source Sans 3: 660 units of 1000)", () => {
    expect(typesetter.capHeight(100)).toBeCloseTo(66, 5);
    expect(capHeightPx(TEXT_SIZE_PX)).toBe(Math.round(0.66 * TEXT_SIZE_PX));
  });
});
