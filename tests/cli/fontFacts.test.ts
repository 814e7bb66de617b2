/**
 * The typesetter draws from facts generated once (cli/src/render/fontFacts.generated.ts) instead of
 * loading fontkit in every process: they must still be what fontkit, an independent font parser, reads
 * from the shipped files.
 */
import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import { describe, expect, it } from "vitest";
import { FONT_FACTS } from "../../cli/src/render/fontFacts.generated.ts";
import { fontFactsFromFile, fontFactsModuleText, parseFont } from "../../cli/src/render/fontFactsFromFile.ts";
import { createFontTypesetter, fontFilePaths, loadTypesetterFonts } from "../../cli/src/render/fontTypesetter.ts";

const files = fontFilePaths();

describe("generated font facts", () => {
  it("match what fontkit reads from the shipped files (else run scripts/generate-font-facts.ts)", () => {
    const fresh = files.map((f) => fontFactsFromFile(readFileSync(f), f));
    expect(fontFactsModuleText(FONT_FACTS)).toBe(fontFactsModuleText(fresh));
  });

  it("cover exactly the code points fontkit has a glyph for, across the whole Basic Multilingual Plane", () => {
    for (const [i, file] of files.entries()) {
      const font = parseFont(readFileSync(file), file);
      const ranges = FONT_FACTS[i].codePointRanges;
      const inRanges = (cp: number): boolean => ranges.some(([a, b]) => cp >= a && cp <= b);
      const disagree: number[] = [];
      for (let cp = 0; cp <= 0xffff; cp++) if (font.hasGlyphForCodePoint(cp) !== inRanges(cp)) disagree.push(cp);
      expect(disagree).toEqual([]);
      expect(ranges.length).toBeGreaterThan(0);
    }
  });

  it("are read from the files the package exports under ./files/ (found through its ./LICENSE export)", () => {
    const require = createRequire(import.meta.url);
    expect(files).toEqual(files.map((f) => require.resolve(`@fontsource/source-sans-3/files/${f.split(/[\\/]/).pop()}`)));
    expect(files.map((f) => f.split(/[\\/]/).pop())).toEqual(["latin", "latin-ext", "greek", "cyrillic"].map((s) => `source-sans-3-${s}-500-normal.woff`));
  });

  it("are refused for a font file of another length", () => {
    const [latin] = loadTypesetterFonts();
    expect(() => createFontTypesetter([{ ...latin, facts: { ...latin.facts, byteLength: latin.facts.byteLength + 1 } }])).toThrow(/were made for a file of \d+ bytes, got \d+/);
  });
});
