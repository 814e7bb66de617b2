/**
 * The typesetter our PNGs' labels and titles are drawn with: Source Sans 3 (SIL Open Font License 1.1, from
 * the @fontsource/source-sans-3 package, read from node_modules: no network), shaped and filled anti-aliased
 * by Skia through @napi-rs/canvas. The font comes as per-script subsets, registered under names of our own
 * and listed in fallback order. Their character maps and metrics come from fontFacts.generated.ts (read
 * from the same files with fontkit when it was generated; loading fontkit at run time would cost ≈ 0.2 s
 * a process): a character none of our subsets holds is drawn as the Latin subset's missing-glyph box
 * (.notdef) by us, so it neither vanishes nor falls through to whatever fonts the machine has installed.
 */
import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import type { SKRSContext2D } from "@napi-rs/canvas";
import { useTypesetter, type TextCoverage, type Typesetter } from "@tidemark/shared/render/text";
import { FONT_FACTS } from "./fontFacts.generated.ts";
import type { FontFacts } from "./fontFactsFromFile.ts";
import { fontFilePaths, SUBSETS } from "./fontFiles.ts";


/**
 * Variables set while @napi-rs/canvas loads, then put back as they were:
 * - DISABLE_SYSTEM_FONTS_LOAD: the package registers the machine's installed fonts when it loads unless it
 *   is set (its index.js). We draw only with the fonts we register and box what they lack ourselves, so that
 *   scan of the font folders is skipped: ≈ 15–25 ms of every scan that draws an image (issue #22).
 * - MIMALLOC_ALLOW_THP=0: the native module's allocator (mimalloc 2.5, its own option) otherwise asks for
 *   transparent huge pages, and on this project's machines about one load in three then spent 35–60 ms of
 *   CPU zeroing 2 MB pages it barely used (seen with perf in the kernel's clear_page_erms; measured
 *   2026-12-05, 22 loads without a slow one after). It changes how Skia's memory is mapped, nothing it
 *   draws; a value the user set is left as it is.
 * Loaded with require, after setting them: a static import would run the package before this module's body.
 */
function loadCanvas(): typeof import("@napi-rs/canvas") {
  const before = { DISABLE_SYSTEM_FONTS_LOAD: process.env.DISABLE_SYSTEM_FONTS_LOAD, MIMALLOC_ALLOW_THP: process.env.MIMALLOC_ALLOW_THP };
  process.env.DISABLE_SYSTEM_FONTS_LOAD = "1";
  process.env.MIMALLOC_ALLOW_THP ??= "0";
  try {
    const require = createRequire(import.meta.url);
    return require("@napi-rs/canvas") as typeof import("@napi-rs/canvas");
  } finally {
    for (const [name, value] of Object.entries(before)) {
      if (value === undefined) delete process.env[name];
      else process.env[name] = value;
    }
  }
}

const { createCanvas, GlobalFonts, Path2D } = loadCanvas();

export interface TypesetterFont {
  /** The name the file is registered under with Skia (ours, so no installed font is picked by mistake). */
  family: string;
  bytes: Uint8Array;
  /** Its metrics, coverage and .notdef (fontFacts.generated.ts). */
  facts: FontFacts;
}

export { fontFilePaths };

/** The shipped subsets, read from node_modules, with the facts generated from them. */
export function loadTypesetterFonts(): TypesetterFont[] {
  if (FONT_FACTS.length !== SUBSETS.length) throw new Error(`font facts: expected ${SUBSETS.length} subsets, got ${FONT_FACTS.length}; run scripts/generate-font-facts.ts`);
  return fontFilePaths().map((file, i) => ({ family: `Tidemark Sans ${SUBSETS[i]}`, bytes: readFileSync(file), facts: FONT_FACTS[i] }));
}

/** Whether a sorted list of inclusive code point runs holds `codePoint` (binary search). */
function inRanges(ranges: ReadonlyArray<readonly [number, number]>, codePoint: number): boolean {
  let lo = 0;
  let hi = ranges.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (codePoint < ranges[mid][0]) hi = mid - 1;
    else if (codePoint > ranges[mid][1]) lo = mid + 1;
    else return true;
  }
  return false;
}

/** A stretch of text Skia sets in our fonts, or one character that none of them has. */
interface Piece {
  text: string;
  missing: boolean;
}

/** Cached coverages and splits beyond this many are dropped all at once. */
const CACHE_LIMIT = 512;
/** Axis labels repeat from image to image and are cached; a title (one per file) is larger than this and is not. */
const CACHED_MASK_MAX_PX = 64 * 64;

/** A typesetter over `fonts` (fallback order; the first is the primary, whose .notdef marks a missing character). */
export function createFontTypesetter(fonts: readonly TypesetterFont[]): Typesetter {
  if (fonts.length === 0) throw new Error("typesetter needs at least one font, got none");
  const parsed = fonts.map((f) => f.facts);
  for (const f of fonts) {
    if (f.bytes.byteLength !== f.facts.byteLength) {
      throw new Error(`font ${f.family}: its facts were made for a file of ${f.facts.byteLength} bytes, got ${f.bytes.byteLength}; run scripts/generate-font-facts.ts`);
    }
    if (!GlobalFonts.register(Buffer.from(f.bytes), f.family)) throw new Error(`font ${f.family}: Skia could not load it`);
  }
  const primary = parsed[0];
  const families = fonts.map((f) => `"${f.family}"`).join(", ");
  const ascentEm = Math.max(...parsed.map((f) => f.ascent / f.unitsPerEm));
  const descentEm = Math.max(...parsed.map((f) => -f.descent / f.unitsPerEm));
  const notdefPath = new Path2D(primary.notdef.svgPath);
  const notdefAdvanceEm = primary.notdef.advanceWidth / primary.unitsPerEm;

  const splits = new Map<string, Piece[]>();
  const coverages = new Map<string, TextCoverage>();
  const measurer = createCanvas(1, 1).getContext("2d");

  const covered = (codePoint: number): boolean => parsed.some((f) => inRanges(f.codePointRanges, codePoint));

  function split(text: string): Piece[] {
    const known = splits.get(text);
    if (known) return known;
    const pieces: Piece[] = [];
    let run = "";
    // File names from macOS arrive decomposed (e + U+0301); the subsets hold the composed letters.
    for (const ch of text.normalize("NFC")) {
      if (covered(ch.codePointAt(0) ?? 0)) {
        run += ch;
        continue;
      }
      if (run !== "") pieces.push({ text: run, missing: false });
      pieces.push({ text: ch, missing: true });
      run = "";
    }
    if (run !== "") pieces.push({ text: run, missing: false });
    if (splits.size >= CACHE_LIMIT) splits.clear();
    splits.set(text, pieces);
    return pieces;
  }

  const setFont = (ctx: SKRSContext2D, sizePx: number): void => {
    ctx.font = `${sizePx}px ${families}`;
  };

  /** Each piece of `text` with its advance at `sizePx`. */
  function widths(text: string, sizePx: number): Array<{ piece: Piece; width: number }> {
    setFont(measurer, sizePx);
    return split(text).map((piece) => ({ piece, width: piece.missing ? notdefAdvanceEm * sizePx : measurer.measureText(piece.text).width }));
  }

  function measure(text: string, sizePx: number): number {
    return widths(text, sizePx).reduce((sum, w) => sum + w.width, 0);
  }

  // One scratch canvas, grown as needed: a canvas per label costs more than the label.
  let scratch = createCanvas(256, 64);
  let ctx = scratch.getContext("2d");

  function rasterise(text: string, sizePx: number): TextCoverage {
    const key = `${sizePx}\u0000${text}`;
    const known = coverages.get(key);
    if (known) return known;
    const pieces = widths(text, sizePx);
    // A pixel of room each side for anti-aliased edges and overhanging glyphs.
    const left = -1;
    const top = Math.ceil(ascentEm * sizePx) + 1;
    const height = top + Math.ceil(descentEm * sizePx) + 1;
    const width = Math.max(1, Math.ceil(pieces.reduce((sum, w) => sum + w.width, 0)) + 3);
    if (width > scratch.width || height > scratch.height) {
      scratch = createCanvas(Math.max(width, scratch.width), Math.max(height, scratch.height));
      ctx = scratch.getContext("2d");
    }
    ctx.clearRect(0, 0, width, height);
    setFont(ctx, sizePx);
    ctx.fillStyle = "#000";
    let pen = -left;
    for (const { piece, width: advance } of pieces) {
      if (piece.missing) {
        // Font units are y-up; the canvas is y-down with the baseline at row `top`.
        const s = sizePx / primary.unitsPerEm;
        ctx.setTransform(s, 0, 0, -s, pen, top);
        ctx.fill(notdefPath);
        ctx.resetTransform();
      } else {
        ctx.fillText(piece.text, pen, top);
      }
      pen += advance;
    }
    const alpha = alphaOf(ctx.getImageData(0, 0, width, height).data, width * height);
    const coverage = { width, height, left, top, alpha };
    if (alpha.length <= CACHED_MASK_MAX_PX) {
      if (coverages.size >= CACHE_LIMIT) coverages.clear();
      coverages.set(key, coverage);
    }
    return coverage;
  }

  return {
    measure,
    capHeight: (sizePx) => (primary.capHeight / primary.unitsPerEm) * sizePx,
    rasterise,
  };
}

/**
 * The alpha bytes of `pixels` RGBA pixels. A function of its own: a title's mask runs the loop long enough
 * for V8 to optimise it, and it then compiles only this loop instead of the whole of rasterise (issue #22).
 */
function alphaOf(rgba: Uint8ClampedArray, pixels: number): Uint8Array {
  const alpha = new Uint8Array(pixels);
  for (let i = 0; i < pixels; i++) alpha[i] = rgba[4 * i + 3];
  return alpha;
}

let installed = false;

/** Installs the font typesetter for this thread's images (once; the fonts are read and parsed here). */
export function installFontTypesetter(): void {
  if (installed) return;
  useTypesetter(createFontTypesetter(loadTypesetterFonts()));
  installed = true;
}
