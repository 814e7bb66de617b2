/**
 * Issue #22: when a scan gives each long file a second thread (cli/src/scan/spectralThreadRule.ts). The
 * rule is ours: a thread per file only while every file measured at once still has a core of its own
 * for it; the flags force it either way.
 */
import { describe, expect, it } from "vitest";
import { useSpectralThread } from "../../cli/src/scan/spectralThreadRule.ts";

describe("the second thread's default", () => {
  it("is on for one file whatever --workers says, when there are two cores", () => {
    for (const workers of [1, 2, 8]) expect(useSpectralThread({ forced: undefined, workers, files: 1, cores: 2 })).toBe(true);
  });

  it("is on for many files on one worker with two cores (the worker and its thread fill them)", () => {
    expect(useSpectralThread({ forced: undefined, workers: 1, files: 50, cores: 2 })).toBe(true);
  });

  it("is off when the workers already use every core", () => {
    expect(useSpectralThread({ forced: undefined, workers: 2, files: 50, cores: 2 })).toBe(false);
    expect(useSpectralThread({ forced: undefined, workers: 2, files: 2, cores: 2 })).toBe(false);
    expect(useSpectralThread({ forced: undefined, workers: 3, files: 3, cores: 4 })).toBe(false);
    expect(useSpectralThread({ forced: undefined, workers: 1, files: 1, cores: 1 })).toBe(false);
  });

  it("is on for two files at once on four cores", () => {
    expect(useSpectralThread({ forced: undefined, workers: 4, files: 2, cores: 4 })).toBe(true);
  });

  it("follows --spectral-thread and --no-spectral-thread whatever the cores", () => {
    expect(useSpectralThread({ forced: true, workers: 2, files: 50, cores: 2 })).toBe(true);
    expect(useSpectralThread({ forced: false, workers: 1, files: 1, cores: 8 })).toBe(false);
  });
});
