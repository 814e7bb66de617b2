/**
 * Labels and titles on an RgbaImage. The glyphs come from a real font through a Typesetter that the shell
 * installs once (the CLI's is cli/src/render/fontTypesetter.ts: Source Sans 3 shaped by fontkit and
 * rasterised by Skia); shared/ stays free of I/O and native code, and only blends the coverage it is given.
 */
import type { RgbaImage } from "../types/analysis.ts";
import { blendMaskInPlace } from "./gridPaint.ts";
import type { Rgb } from "./raster.ts";

/** One line of text as anti-aliased coverage (0 … 255, row after row), placed relative to the pen. */
export interface TextCoverage {
  width: number;
  height: number;
  /** Pixels from the pen's start to the mask's left edge (may be negative). */
  left: number;
  /** Pixels from the baseline up to the mask's top row. */
  top: number;
  alpha: Uint8Array;
}

export interface Typesetter {
  /** Advance width of `text` at a font size of `sizePx` (the em), in pixels. */
  measure(text: string, sizePx: number): number;
  /** Height of a capital above the baseline at `sizePx`, in pixels. */
  capHeight(sizePx: number): number;
  /** `text` rasterised at `sizePx`; a character no font holds is drawn as the font's missing-glyph box. */
  rasterise(text: string, sizePx: number): TextCoverage;
}

let installed: Typesetter | null = null;

/** Sets the typesetter every image in this thread draws its text with. */
export function useTypesetter(t: Typesetter): void {
  installed = t;
}

function typesetter(): Typesetter {
  if (installed === null) {
    throw new Error("no typesetter installed: call useTypesetter() (the CLI's is cli/src/render/fontTypesetter.ts) before drawing text");
  }
  return installed;
}

export type HorizontalAlign = "left" | "center" | "right";

export interface TextStyle {
  /** Font size (the em) in pixels. */
  sizePx: number;
  align?: HorizontalAlign;
  alpha?: number;
}

/** Width in pixels of `text` at `sizePx`, rounded up. */
export function textWidthPx(text: string, sizePx: number): number {
  return text === "" ? 0 : Math.ceil(typesetter().measure(text, sizePx));
}

/** Height of the cap (digits, capitals) at `sizePx`, whole pixels: what labels centre on. */
export function capHeightPx(sizePx: number): number {
  return Math.round(typesetter().capHeight(sizePx));
}

/**
 * Draws text with its cap top at y; x is the left edge, centre or right edge per `align`. Pixels off the
 * image are skipped, so labels near an edge are safe to draw.
 */
export function drawText(image: RgbaImage, text: string, x: number, y: number, colour: Rgb, style: TextStyle): void {
  if (text === "") return;
  const t = typesetter();
  const width = t.measure(text, style.sizePx);
  const penX = Math.round(style.align === "center" ? x - width / 2 : style.align === "right" ? x - width : x);
  const baseline = Math.round(y) + capHeightPx(style.sizePx);
  const mask = t.rasterise(text, style.sizePx);
  blendCoverage(image, mask, penX + mask.left, baseline - mask.top, colour, style.alpha ?? 1);
}

function blendCoverage(image: RgbaImage, mask: TextCoverage, left: number, top: number, colour: Rgb, alpha: number): void {
  const d = image.data;
  const [r, g, b] = colour;
  const x0 = Math.max(0, -left);
  const x1 = Math.min(mask.width, image.width - left);
  const y0 = Math.max(0, -top);
  const y1 = Math.min(mask.height, image.height - top);
  const k = alpha / 255;
  if (x1 <= x0 || y1 <= y0) return;
  // In gridPaint.wat where the pixels lie in an image memory: the same bytes (tests/shared/text.test.ts).
  if (blendMaskInPlace(d, image.width, mask, left, top, { x0, x1, y0, y1 }, colour, k)) return;
  for (let my = y0; my < y1; my++) {
    let i = ((top + my) * image.width + left + x0) * 4;
    let m = my * mask.width + x0;
    for (let mx = x0; mx < x1; mx++, i += 4, m++) {
      const c = mask.alpha[m];
      if (c === 0) continue;
      const a = c * k;
      d[i] = Math.round(d[i] + (r - d[i]) * a);
      d[i + 1] = Math.round(d[i + 1] + (g - d[i + 1]) * a);
      d[i + 2] = Math.round(d[i + 2] + (b - d[i + 2]) * a);
    }
  }
}

/**
 * `text` if it fits `maxWidthPx`, else "…" and its longest fitting end: for a path, the file name
 * matters more than the folders leading to it.
 */
export function fitTextKeepingEnd(text: string, maxWidthPx: number, sizePx: number): string {
  if (textWidthPx(text, sizePx) <= maxWidthPx) return text;
  const chars = [...text];
  // Binary search on how many leading characters to drop: each measure shapes the whole string.
  let lo = 1;
  let hi = chars.length;
  if (textWidthPx("…", sizePx) > maxWidthPx) return "";
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (textWidthPx(`…${chars.slice(mid).join("")}`, sizePx) <= maxWidthPx) hi = mid;
    else lo = mid + 1;
  }
  return `…${chars.slice(lo).join("")}`;
}
