import type { Migration } from "../server/src/db/migrator.ts";

// Runs of distributed scanning. A run owns one batch (its results are appended to it) and one job per
// file path; the job row points at its current pg-boss job and keeps the state the portal counts.
// Attempts record who claimed a job and how each claim ended, so a dead worker's jobs can be traced.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`create type scan_job_state as enum ('queued', 'active', 'done', 'failed')`);
    await q(`create table scan_runs (
      id serial primary key,
      collection_id integer not null references collections(id),
      batch_id integer not null unique references batches(id),
      created_by integer not null references users(id),
      name text not null,
      root text not null,
      profile_name text not null,
      profile_hash text not null,
      profile jsonb not null,
      started_at timestamptz,
      finished_at timestamptz,
      notified_at timestamptz,
      created_at timestamptz not null default now(),
      updated_at timestamptz not null default now(),
      constraint scan_runs_collection_name unique (collection_id, name)
    )`);
    await q(`create index scan_runs_created_idx on scan_runs (created_at, id)`);
    await q(`create table scan_jobs (
      id serial primary key,
      run_id integer not null references scan_runs(id) on delete cascade,
      path text not null,
      size_bytes bigint not null,
      mtime_ms double precision not null,
      queue_job_id uuid not null unique,
      state scan_job_state not null default 'queued',
      attempts integer not null default 0,
      worker text,
      last_error text,
      claimed_at timestamptz,
      expires_at timestamptz,
      done_at timestamptz,
      file_result_id integer references file_results(id) on delete set null,
      created_at timestamptz not null default now(),
      updated_at timestamptz not null default now(),
      -- One job per file of a run: a result is appended to the run's batch at most once per path.
      constraint scan_jobs_run_path unique (run_id, path)
    )`);
    await q(`create index scan_jobs_run_state_idx on scan_jobs (run_id, state, id)`);
    await q(`create index scan_jobs_expiry_idx on scan_jobs (expires_at) where state = 'active'`);
    await q(`create index scan_jobs_done_idx on scan_jobs (run_id, done_at) where state = 'done'`);
    await q(`create table scan_job_attempts (
      id serial primary key,
      job_id integer not null references scan_jobs(id) on delete cascade,
      attempt integer not null,
      worker text not null,
      claimed_at timestamptz not null default now(),
      ended_at timestamptz,
      outcome text check (outcome in ('done', 'failed', 'released', 'expired', 'superseded')),
      message text,
      constraint scan_job_attempts_job_attempt unique (job_id, attempt)
    )`);
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`drop table scan_job_attempts`);
    await q(`drop table scan_jobs`);
    await q(`drop table scan_runs`);
    await q(`drop type scan_job_state`);
  });
};
