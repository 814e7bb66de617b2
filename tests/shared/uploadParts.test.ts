import { describe, expect, it } from "vitest";
import { excerptMediaTypeOf, PART_FIELDS, PART_NAMES, partName } from "../../shared/src/contracts/uploadParts.ts";
import { EXCERPT_MEDIA_TYPES } from "../../shared/src/types/codes.ts";

// The CLI names parts with partName(); the server matches them with PART_NAMES: the two must agree.
describe("upload part names", () => {
  it("reads back the file and close-up index of every name the CLI writes", () => {
    for (const field of PART_FIELDS) {
      const perCloseup = PART_NAMES[field].shape.includes("<k>");
      for (const mediaType of field === "excerpt" ? EXCERPT_MEDIA_TYPES : ([undefined] as const)) {
        const name = partName(field, 12, perCloseup ? { k: 3, excerptMediaType: mediaType } : undefined);
        const match = PART_NAMES[field].pattern.exec(name);
        expect(match, `${field} ${name}`).not.toBeNull();
        expect(match![1]).toBe("12");
        if (perCloseup) expect(match![2]).toBe("3");
        if (mediaType) expect(excerptMediaTypeOf(name)).toBe(mediaType);
      }
    }
  });

  it("refuses names of another shape and unknown excerpt types", () => {
    expect(PART_NAMES.spectrogram.pattern.test("12.3.png")).toBe(false);
    expect(PART_NAMES.closeupWaveform.pattern.test("12.png")).toBe(false);
    expect(PART_NAMES.excerpt.pattern.test("1.2.mp3")).toBe(false);
    expect(excerptMediaTypeOf("1.2.mp3")).toBeNull();
    expect(excerptMediaTypeOf("1.2.FLAC")).toBe("audio/flac");
    expect(() => partName("excerpt", 1)).toThrow(/close-up/);
  });
});
