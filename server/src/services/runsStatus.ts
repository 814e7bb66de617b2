/**
 * Progress of runs: job counts by state, when work started and last finished, and throughput, computed
 * from the job rows in one grouped query for any number of runs.
 */
import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import type { ScanRunCountsDto, ScanRunState, ScanRunThroughputDto } from "@tidemark/shared/types/api";

/** Recent throughput looks back this far: long enough to smooth file sizes, short enough to show a stall. */
export const THROUGHPUT_WINDOW_SECONDS = 300;

export interface RunStats {
  counts: ScanRunCountsDto;
  lastResultAt: Date | null;
  audioSeconds: number;
  recentDone: number;
}

interface StatsRow {
  run_id: number;
  total: number;
  queued: number;
  active: number;
  done: number;
  failed: number;
  retried: number;
  recent_done: number;
  last_result_at: Date | null;
  audio_seconds: number | null;
}

const EMPTY: RunStats = {
  counts: { total: 0, queued: 0, active: 0, done: 0, failed: 0, retried: 0 },
  lastResultAt: null,
  audioSeconds: 0,
  recentDone: 0,
};

export async function runStats(sequelize: Sequelize, runIds: number[]): Promise<Map<number, RunStats>> {
  const stats = new Map<number, RunStats>(runIds.map((id) => [id, EMPTY]));
  if (runIds.length === 0) return stats;
  const rows = await sequelize.query<StatsRow>(
    `select j.run_id,
            count(*)::int as total,
            count(*) filter (where j.state = 'queued')::int as queued,
            count(*) filter (where j.state = 'active')::int as active,
            count(*) filter (where j.state = 'done')::int as done,
            count(*) filter (where j.state = 'failed')::int as failed,
            count(*) filter (where j.attempts > 1)::int as retried,
            count(*) filter (where j.state = 'done' and j.done_at > now() - $2 * interval '1 second')::int as recent_done,
            max(j.done_at) as last_result_at,
            sum(f.duration_seconds) filter (where j.state = 'done') as audio_seconds
       from scan_jobs j
       left join file_results f on f.id = j.file_result_id
      where j.run_id = any($1::int[])
      group by j.run_id`,
    { bind: [runIds, THROUGHPUT_WINDOW_SECONDS], type: QueryTypes.SELECT },
  );
  for (const r of rows) {
    stats.set(r.run_id, {
      counts: { total: r.total, queued: r.queued, active: r.active, done: r.done, failed: r.failed, retried: r.retried },
      lastResultAt: r.last_result_at ? new Date(r.last_result_at) : null,
      audioSeconds: Number(r.audio_seconds ?? 0),
      recentDone: r.recent_done,
    });
  }
  return stats;
}

export function runState(counts: ScanRunCountsDto, startedAt: Date | null): ScanRunState {
  if (counts.total === 0 || (!startedAt && counts.done + counts.failed === 0)) return "waiting";
  if (counts.queued + counts.active > 0) return "running";
  return counts.failed > 0 ? "failed" : "done";
}

/** A finished run is judged by its whole-run rate; a running one by what it does now (a stall shows). */
export function runThroughput(stats: RunStats, startedAt: Date | null, now = new Date()): ScanRunThroughputDto {
  const windowSeconds = THROUGHPUT_WINDOW_SECONDS;
  const running = stats.counts.queued + stats.counts.active > 0;
  if (!startedAt || !stats.lastResultAt || stats.counts.done === 0) {
    return { filesPerMinute: null, recentFilesPerMinute: null, audioSecondsPerSecond: null, windowSeconds, shown: { basis: running ? "recent" : "whole-run", filesPerMinute: null } };
  }
  const elapsedSeconds = Math.max(0.001, (stats.lastResultAt.getTime() - startedAt.getTime()) / 1000);
  // A run younger than the window is measured over its own age.
  const windowUsed = Math.max(0.001, Math.min(windowSeconds, (now.getTime() - startedAt.getTime()) / 1000));
  const filesPerMinute = (stats.counts.done / elapsedSeconds) * 60;
  const recentFilesPerMinute = stats.recentDone > 0 ? (stats.recentDone / windowUsed) * 60 : null;
  return {
    filesPerMinute,
    recentFilesPerMinute,
    audioSecondsPerSecond: stats.audioSeconds / elapsedSeconds,
    windowSeconds,
    shown: running ? { basis: "recent", filesPerMinute: recentFilesPerMinute } : { basis: "whole-run", filesPerMinute },
  };
}

/** True when the run has a job still queued or held by a worker. */
export async function runHasPendingJobs(sequelize: Sequelize, runId: number, transaction?: Transaction): Promise<boolean> {
  const [row] = await sequelize.query<{ pending: boolean }>(
    `select exists (select 1 from scan_jobs where run_id = $1 and state in ('queued', 'active')) as pending`,
    { bind: [runId], type: QueryTypes.SELECT, transaction },
  );
  return row.pending;
}

/** Marks the run finished if nothing is left to do; true when this call finished it. */
export async function markRunFinishedIfDone(sequelize: Sequelize, runId: number, transaction: Transaction): Promise<boolean> {
  if (await runHasPendingJobs(sequelize, runId, transaction)) return false;
  const rows = await sequelize.query<{ id: number }>(
    `update scan_runs set finished_at = now(), updated_at = now() where id = $1 and finished_at is null returning id`,
    { bind: [runId], type: QueryTypes.SELECT, transaction },
  );
  return rows.length > 0;
}
