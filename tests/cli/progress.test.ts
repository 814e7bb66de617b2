import { describe, expect, it } from "vitest";
import { fitWidth, progressText, realtimeFactor } from "../../cli/src/scan/progress.ts";

describe("scan progress text", () => {
  it("shows n/total, the current file and the realtime factor (audio seconds per wall second)", () => {
    expect(realtimeFactor(600, 4)).toBe(150);
    expect(realtimeFactor(10, 0)).toBe(0);
    expect(progressText(3, 40, "Lighthouse Choir Reels/LCR-02.wav", 152.4)).toBe("3/40  Lighthouse Choir Reels/LCR-02.wav  152x realtime");
    expect(progressText(0, 8, null, 0)).toBe("0/8");
    expect(progressText(1, 8, "a.wav", 4.25)).toBe("1/8  a.wav  4.3x realtime");
  });

  it("fits one terminal line, shortening the middle", () => {
    const text = progressText(12, 400, "Ferry Terminal Interviews 1978/FTI-04 deckhands (access copy).wav", 180);
    const fitted = fitWidth(text, 40);
    expect(fitted).toHaveLength(40);
    expect(fitted.startsWith("12/400  ")).toBe(true);
    expect(fitted.endsWith("180x realtime")).toBe(true);
    expect(fitted).toContain("…");
    expect(fitWidth("short", 40)).toBe("short");
  });
});
