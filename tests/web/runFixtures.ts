/** Invented Harbourside runs shaped like the API's run DTOs. */
import type { ScanJobDto, ScanRunDetailDto, ScanRunDto } from "@tidemark/shared/types/api";

export function scanRun(id: number, overrides: Partial<ScanRunDto> = {}): ScanRunDto {
  return {
    id,
    name: `/srv/harbourside/ferry-1978/night-${id}`,
    collection: { id: 1, name: "Ferry Terminal Interviews 1978" },
    root: `/srv/harbourside/ferry-1978/night-${id}`,
    profileName: "preservation-master",
    profileHash: "b".repeat(64),
    batchId: 40 + id,
    createdBy: { id: 3, email: "technician@harbourside.test", name: "Technician Demo" },
    createdAt: "2026-12-01T21:00:00.000Z",
    firstClaimAt: "2026-12-01T21:00:05.000Z",
    lastResultAt: "2026-12-01T21:10:05.000Z",
    state: "running",
    counts: { total: 120, queued: 40, active: 3, done: 75, failed: 2, retried: 4 },
    verdicts: { files: 75, pass: 60, warn: 10, fail: 4, error: 1 },
    throughput: { filesPerMinute: 7.5, recentFilesPerMinute: 8.2, audioSecondsPerSecond: 41.3, windowSeconds: 300, shown: { basis: "recent", filesPerMinute: 8.2 } },
    ...overrides,
  };
}

export function scanJob(id: number, overrides: Partial<ScanJobDto> = {}): ScanJobDto {
  return {
    id,
    runId: 7,
    path: `reel-${id}/side-a.wav`,
    sizeBytes: 1_234_567,
    state: "failed",
    attempts: 4,
    worker: "scan-02#4411",
    lastError: "scan-02#4411: /srv/harbourside/ferry-1978/reel-9/side-a.wav is not reachable from this worker (EACCES)",
    fileResultId: null,
    claimedAt: "2026-12-01T21:05:00.000Z",
    doneAt: null,
    updatedAt: "2026-12-01T21:06:00.000Z",
    ...overrides,
  };
}

export function runDetail(id: number, overrides: Partial<ScanRunDetailDto> = {}): ScanRunDetailDto {
  return {
    ...scanRun(id),
    failedJobs: [scanJob(91, { runId: id }), scanJob(92, { runId: id, path: "reel-12/side-b.wav", lastError: "measurement failed: worker exited with code 134" })],
    activeJobs: [scanJob(95, { runId: id, state: "active", attempts: 1, worker: "scan-01#300", lastError: null })],
    returnedJobs: [],
    ...overrides,
  };
}
