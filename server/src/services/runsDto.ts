/** Run and job rows → the DTOs of shared/src/types/api.ts. */
import type { ScanJobDto, ScanRunDetailDto, ScanRunDto } from "@tidemark/shared/types/api";
import { toCollectionDto, toUserRefDto } from "../dto.ts";
import type { ScanJob, ScanRun } from "../models/index.ts";
import { runState, runThroughput, type RunStats } from "./runsStatus.ts";

const iso = (d: Date | null): string | null => (d ? d.toISOString() : null);

function required<T>(value: T | null | undefined, what: string): T {
  if (value === null || value === undefined) throw new Error(`${what} was not loaded`);
  return value;
}

export function toScanRunDto(run: ScanRun, stats: RunStats, verdicts: ScanRunDto["verdicts"]): ScanRunDto {
  return {
    id: run.id,
    name: run.name,
    collection: toCollectionDto(required(run.collection, "run.collection")),
    root: run.root,
    profileName: run.profileName,
    profileHash: run.profileHash,
    batchId: run.batchId,
    createdBy: toUserRefDto(required(run.creator, "run.creator")),
    createdAt: run.createdAt.toISOString(),
    firstClaimAt: iso(run.startedAt),
    lastResultAt: iso(stats.lastResultAt),
    state: runState(stats.counts, run.startedAt),
    counts: stats.counts,
    verdicts,
    throughput: runThroughput(stats, run.startedAt),
  };
}

export function toScanJobDto(job: ScanJob): ScanJobDto {
  return {
    id: job.id,
    runId: job.runId,
    path: job.path,
    sizeBytes: Number(job.sizeBytes),
    state: job.state,
    attempts: job.attempts,
    worker: job.worker,
    lastError: job.lastError,
    fileResultId: job.fileResultId,
    claimedAt: iso(job.claimedAt),
    doneAt: iso(job.doneAt),
    updatedAt: job.updatedAt.toISOString(),
  };
}

export function toScanRunDetailDto(base: ScanRunDto, failed: ScanJob[], active: ScanJob[], returned: ScanJob[]): ScanRunDetailDto {
  return { ...base, failedJobs: failed.map(toScanJobDto), activeJobs: active.map(toScanJobDto), returnedJobs: returned.map(toScanJobDto) };
}
