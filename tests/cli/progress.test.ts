import { describe, expect, it } from "vitest";
import { createScanProgress, estimateEta, fitWidth, formatEta, progressText, realtimeFactor } from "../../cli/src/scan/progress.ts";

const state = { done: 3, total: 40, bytesDone: 0, totalBytes: 0, current: null, factor: 0, etaSeconds: null };

describe("progress text", () => {
  it("shows n/total, the share of bytes read, the ETA, the current file and the realtime factor", () => {
    expect(realtimeFactor(600, 4)).toBe(150);
    expect(realtimeFactor(10, 0)).toBe(0);
    expect(progressText({ ...state, current: "Lighthouse Choir Reels/LCR-02.wav", factor: 152.4 })).toBe("3/40  Lighthouse Choir Reels/LCR-02.wav  152x realtime");
    expect(progressText({ ...state, done: 0, total: 8 })).toBe("0/8");
    expect(progressText({ ...state, done: 1, total: 8, current: "a.wav", factor: 4.25 })).toBe("1/8  a.wav  4.3x realtime");
    expect(progressText({ ...state, bytesDone: 250, totalBytes: 1000, etaSeconds: 3725 })).toBe("3/40  25%  ETA 1:02:05");
  });

  it("estimates the time left from the bytes read this run and the time taken", () => {
    // 100 MB in 10 s is 10 MB/s: 400 MB left take 40 s.
    expect(estimateEta(100e6, 400e6, 10)).toBeCloseTo(40, 9);
    expect(estimateEta(100e6, 400e6, 0.5)).toBeNull();
    expect(estimateEta(0, 400e6, 10)).toBeNull();
    expect(formatEta(59.6)).toBe("1:00");
    expect(formatEta(3600)).toBe("1:00:00");
  });

  it("fits one terminal line, shortening the middle", () => {
    const text = progressText({ ...state, done: 12, total: 400, current: "Ferry Terminal Interviews 1978/FTI-04 deckhands (access copy).wav", factor: 180 });
    const fitted = fitWidth(text, 40);
    expect(fitted).toHaveLength(40);
    expect(fitted.startsWith("12/400  ")).toBe(true);
    expect(fitted.endsWith("180x realtime")).toBe(true);
    expect(fitted).toContain("…");
    expect(fitWidth("short", 40)).toBe("short");
  });
});

describe("JSON-lines progress", () => {
  it("counts bytes within a file, throttles to one line a second, and ends with a done line", () => {
    let t = 0;
    const lines: string[] = [];
    const stream = { write: (s: string) => lines.push(s), isTTY: false } as unknown as NodeJS.WritableStream;
    const p = createScanProgress({ total: 2, totalBytes: 3000, alreadyDone: 0, stream, display: "json", now: () => t });
    p.fileStarted("long.wav");
    t = 2000;
    p.fileBytes("long.wav", 1000);
    p.fileStarted("short.wav");
    t = 2500; // within the second: no line
    p.fileDone("short.wav", 1, 500);
    p.note("tidemark: warning: something");
    p.stop();
    const records = lines.map((l) => JSON.parse(l) as Record<string, unknown>);
    expect(records[0]).toMatchObject({ event: "progress", filesDone: 0, files: 2, bytesDone: 0, bytes: 3000, etaSeconds: null });
    // 1000 bytes in 2 s: the other 2000 take 4 s.
    expect(records[1]).toMatchObject({ event: "progress", bytesDone: 1000, etaSeconds: 4, current: "long.wav" });
    expect(records.filter((r) => r.event === "progress")).toHaveLength(2);
    expect(records).toContainEqual({ event: "note", message: "warning: something" });
    expect(records.at(-1)).toMatchObject({ event: "done", filesDone: 1, bytesDone: 1500 });
  });

  it("grows its totals as a worker claims jobs, so the ETA covers the jobs in hand", () => {
    let t = 0;
    const lines: string[] = [];
    const stream = { write: (s: string) => lines.push(s), isTTY: false } as unknown as NodeJS.WritableStream;
    const p = createScanProgress({ total: 0, totalBytes: 0, alreadyDone: 0, stream, display: "json", now: () => t });
    p.grow(1, 4000);
    p.fileStarted("reel-7.wav");
    t = 2000;
    p.fileBytes("reel-7.wav", 1000);
    p.stop();
    const records = lines.map((l) => JSON.parse(l) as Record<string, unknown>);
    // 1000 of 4000 bytes in 2 s: 6 s left.
    expect(records.find((r) => r.event === "progress" && r.bytesDone === 1000)).toMatchObject({ files: 1, bytes: 4000, etaSeconds: 6 });
  });

  it("writes nothing when off", () => {
    const lines: string[] = [];
    const stream = { write: (s: string) => lines.push(s), isTTY: true, columns: 80 } as unknown as NodeJS.WritableStream;
    const p = createScanProgress({ total: 1, totalBytes: 10, alreadyDone: 0, stream, display: "off" });
    p.fileStarted("a.wav");
    p.fileDone("a.wav", 1, 10);
    p.stop();
    expect(lines).toEqual([]);
  });
});
