import type { Migration } from "../server/src/db/migrator.ts";

// Worker heartbeats and fair retries (issue #24), job ownership (issue #19):
// - heartbeat_at: the last sign of life of the worker holding an active job; a job silent past the
//   heartbeat limit goes back to the queue long before pg-boss's visibility timeout.
// - unreachable_by: workers that could not reach the file (not mounted there); releasing for that reason
//   spends no retry, and the job is dead-lettered once enough distinct workers could not reach it.
// - failures: attempts that failed or went silent since the job was last queued afresh (our own count,
//   so a release never spends a retry as a pg-boss re-fetch would).
// - scan_job_attempts.token_id: the API token that claimed the attempt; results and state changes for a
//   job are taken only from a token that claimed it (or an admin).
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`alter table scan_jobs add column heartbeat_at timestamptz, add column unreachable_by text[] not null default '{}', add column failures integer not null default 0`);
    await q(`create index scan_jobs_heartbeat_idx on scan_jobs (heartbeat_at) where state = 'active'`);
    await q(`alter table scan_job_attempts add column token_id text references api_tokens(id) on delete set null`);
    await q(`alter table scan_job_attempts drop constraint scan_job_attempts_outcome_check`);
    await q(
      `alter table scan_job_attempts add constraint scan_job_attempts_outcome_check
         check (outcome in ('done', 'failed', 'released', 'expired', 'superseded', 'unreachable', 'requeued'))`,
    );
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`update scan_job_attempts set outcome = 'released' where outcome in ('unreachable', 'requeued')`);
    await q(`alter table scan_job_attempts drop constraint scan_job_attempts_outcome_check`);
    await q(`alter table scan_job_attempts add constraint scan_job_attempts_outcome_check check (outcome in ('done', 'failed', 'released', 'expired', 'superseded'))`);
    await q(`alter table scan_job_attempts drop column token_id`);
    await q(`drop index scan_jobs_heartbeat_idx`);
    await q(`alter table scan_jobs drop column heartbeat_at, drop column unreachable_by, drop column failures`);
  });
};
