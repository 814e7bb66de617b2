/** Invented Harbourside Sound Archive data shaped exactly like the API DTOs. */
import type { BatchDto, FileDetailDto, FilePage, FileSummaryDto, Page, Role, UserDto } from "@tidemark/shared/types/api";

export function user(role: Role, id = 1): UserDto {
  return { id, email: `${role}@harbourside.test`, name: `${role[0].toUpperCase()}${role.slice(1)} Demo`, role, disabled: false, createdAt: "2026-11-01T09:00:00.000Z" };
}

const ferry = { id: 1, name: "Ferry Terminal Interviews 1978" };

export function fileSummary(id: number, overrides: Partial<FileSummaryDto> = {}): FileSummaryDto {
  return {
    id,
    batchId: 3,
    collection: ferry,
    path: `ferry/interview-${String(id).padStart(2, "0")}.wav`,
    durationSeconds: 120,
    format: { container: "bwf", encoding: "pcm", sampleRateHz: 96000, bitDepth: 24, channels: 2, durationSeconds: 120 },
    verdict: "fail",
    reviewState: "pending",
    worstFindings: [{ code: "clipping", severity: "fail", count: 2 }],
    integratedLufs: -18.4,
    truePeakDbtp: 0.3,
    hasSpectrogram: true,
    createdAt: "2026-11-20T10:00:00.000Z",
    ...overrides,
  };
}

export function page<T>(items: T[], total = items.length, pageNumber = 1, pageSize = 50): Page<T> {
  return { items, total, page: pageNumber, pageSize };
}

/** A GET /api/files answer: exact total, and cursors as the server makes them (opaque; here they name the page). */
export function filePage(items: FileSummaryDto[], total = items.length, pageNumber = 1, pageSize = 50): FilePage {
  return {
    ...page(items, total, pageNumber, pageSize),
    totalIsEstimate: false,
    nextCursor: pageNumber * pageSize < total ? `after-page-${pageNumber}` : null,
    prevCursor: pageNumber > 1 ? `before-page-${pageNumber}` : null,
  };
}

export function fileDetail(id: number, overrides: Partial<FileDetailDto> = {}): FileDetailDto {
  return {
    ...fileSummary(id),
    sizeBytes: 69_120_044,
    sha256: "a".repeat(64),
    metadata: {},
    metrics: {
      samplePeakDbfs: 0,
      truePeakDbtp: 0.3,
      rmsDbfs: -16.2,
      integratedLufs: -18.4,
      loudnessRangeLu: 7.5,
      maxMomentaryLufs: -9.1,
      maxShortTermLufs: -12.5,
      clippedSamples: 48,
      clipEvents: 2,
      dcOffsetPercent: 0.02,
      bandwidthHz: 20000,
      dominantFrequencyHz: 440,
      noiseFloorDbfs: null,
      stereoCorrelation: 0.82,
      effectiveBitDepth: 24,
      bands: {
        octave: [
          { centerHz: 125, db: -30 },
          { centerHz: 1000, db: -12 },
          { centerHz: 8000, db: null },
        ],
        third: [{ centerHz: 1000, db: -14 }],
      },
      channels: [
        { samplePeakDbfs: 0, truePeakDbtp: 0.3, rmsDbfs: -16.2, dcOffsetPercent: 0.02, clippedSamples: 40 },
        { samplePeakDbfs: -1.2, truePeakDbtp: -0.9, rmsDbfs: -17, dcOffsetPercent: 0.01, clippedSamples: 8 },
      ],
    },
    error: null,
    findings: [
      { id: 11, code: "clipping", severity: "fail", channel: 0, startSeconds: 30, endSeconds: 30.5, message: "24 consecutive samples at full scale" },
      { id: 12, code: "hum", severity: "warn", channel: null, startSeconds: null, endSeconds: null, message: "50 Hz and harmonics 18 dB above the floor" },
    ],
    comments: [],
    reviewEvents: [],
    fixityHistory: [{ fileResultId: id, batchId: 3, sha256: "a".repeat(64), scannedAt: "2026-11-20T10:00:00.000Z", changed: false }],
    fixityChecks: [],
    spectrogramUrl: `/api/files/${id}/spectrogram.png`,
    waveformUrl: `/api/files/${id}/waveform.png`,
    closeups: [],
    closeupsOmitted: [],
    levelGridUrl: null,
    loudnessCurveUrl: null,
    profileLimits: null,
    ...overrides,
  };
}

export function batch(id: number, overrides: Partial<BatchDto> = {}): BatchDto {
  return {
    id,
    collection: ferry,
    uploader: { id: 3, email: "technician@harbourside.test", name: "Technician Demo" },
    batchKey: `2026-11-20-station-1-${id}`,
    profileName: "preservation-master",
    profileHash: null,
    toolVersion: "0.1.0",
    startedAt: "2026-11-20T09:00:00.000Z",
    finishedAt: "2026-11-20T09:30:00.000Z",
    createdAt: "2026-11-20T09:31:00.000Z",
    counts: { files: 12, pass: 8, warn: 2, fail: 1, error: 1 },
    ...overrides,
  };
}
