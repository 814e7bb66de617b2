/** Issue #16 data for component tests: a file with one close-up, a tiny level grid and a loudness curve. */
import type { BatchOverviewDto, FileDetailDto } from "@tidemark/shared/types/api";
import { fileDetail } from "./fixtures.ts";

/** 8 columns × 4 rows over 120 s: 15 s per column; rows centred on 100 Hz, 1 kHz, 5 kHz and 15 kHz. */
export const GRID_COLUMNS = 8;
export const GRID_ROWS = 4;

export function levelGridJson(set: Array<{ column: number; row: number; level: number }> = []) {
  const levels = new Uint8Array(GRID_COLUMNS * GRID_ROWS);
  for (const { column, row, level } of set) levels[column * GRID_ROWS + row] = level;
  return {
    schema: "tidemark.level-grid/1",
    durationSeconds: 120,
    columns: GRID_COLUMNS,
    rows: GRID_ROWS,
    secondsPerColumn: 15,
    frequencyScale: "log",
    minHz: 20,
    maxHz: 24000,
    rowCenterHz: [100, 1000, 5000, 15000],
    dbMin: -120,
    dbMax: 0,
    levels: btoa(String.fromCharCode(...levels)),
  };
}

export function loudnessCurveJson() {
  const n = 1200; // 120 s at 0.1 s
  const momentary = Array.from({ length: n }, (_, i) => (i === 300 ? -9.1 : -20 + Math.sin(i / 50)));
  const shortTerm = Array.from({ length: n }, (_, i) => (i < 30 ? null : -21 + 0.5 * Math.sin(i / 80)));
  return {
    schema: "tidemark.loudness-curve/1",
    durationSeconds: 120,
    stepSeconds: 0.1,
    momentaryLufs: momentary,
    shortTermLufs: shortTerm,
    peakStepSeconds: 0.1,
    samplePeakDbfs: [momentary.map(() => -3), momentary.map(() => -4)],
  };
}

export const CLOSEUP = {
  index: 0,
  findingIds: [11],
  startSeconds: 28,
  endSeconds: 32.5,
  secondsPerColumn: 0.005,
  spectrogramUrl: "/api/files/7/closeups/0/spectrogram.png",
  waveformUrl: "/api/files/7/closeups/0/waveform.png",
  excerptUrl: "/api/files/7/closeups/0/excerpt",
  excerptMediaType: "audio/flac" as const,
};

export function reviewDetail(overrides: Partial<FileDetailDto> = {}): FileDetailDto {
  const base = fileDetail(7);
  return fileDetail(7, {
    findings: [
      ...base.findings,
      { id: 13, code: "dropout", severity: "fail", channel: 1, startSeconds: 90, endSeconds: 90.04, message: "40 ms of digital silence" },
    ],
    closeups: [CLOSEUP],
    closeupsOmitted: [{ findingId: 13, reason: "cap" }, { findingId: 12, reason: "not-timed" }],
    levelGridUrl: "/api/files/7/level-grid",
    loudnessCurveUrl: "/api/files/7/loudness-curve",
    profileLimits: { integratedLufs: { target: -23, warnToleranceLu: 1, failToleranceLu: 2 }, truePeakMaxDbtp: -1 },
    ...overrides,
  });
}

export function batchOverview(): BatchOverviewDto {
  return {
    batchId: 3,
    profileLimits: { integratedLufs: { target: -23, warnToleranceLu: 1, failToleranceLu: 2 }, truePeakMaxDbtp: -1 },
    files: [
      { id: 1, path: "ferry/interview-01.wav", verdict: "pass", integratedLufs: -23.2, truePeakDbtp: -3 },
      { id: 2, path: "ferry/interview-02.wav", verdict: "fail", integratedLufs: -18.4, truePeakDbtp: 0.3 },
      { id: 3, path: "ferry/interview-03.wav", verdict: "error", integratedLufs: null, truePeakDbtp: null },
      { id: 4, path: "ferry/interview-04.wav", verdict: "warn", integratedLufs: -26.1, truePeakDbtp: -1.5 },
    ],
    findingCounts: [
      { code: "hum", severity: "warn", files: 1, findings: 1 },
      { code: "clipping", severity: "fail", files: 2, findings: 5 },
    ],
  };
}
