import type { Migration } from "../server/src/db/migrator.ts";

// The list columns the Files table sorts and filters on (duration, loudness, true peak, worst findings,
// finding codes) are copied out of the JSON at ingest, so GET /api/files reads one row per file and every
// sort key has its own index. Quiet values (−∞) are stored as NULL and sort first, as the smallest.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`create extension if not exists pg_trgm`);
    // Enum order is sort order: the contract's order of verdicts and review states.
    await q(`create type verdict as enum ('pass', 'warn', 'fail', 'error')`);
    await q(`create type review_state as enum ('pending', 'accepted', 'flagged', 'retransfer')`);
    await q(`create type finding_severity as enum ('info', 'warn', 'fail')`);
    await q(`create table file_results (
      id serial primary key,
      batch_id integer not null references batches(id) on delete cascade,
      collection_id integer not null references collections(id),
      previous_id integer references file_results(id) on delete set null,
      path text not null,
      size_bytes bigint not null,
      sha256 text,
      format jsonb,
      metadata jsonb not null default '{}',
      metrics jsonb,
      error jsonb,
      verdict verdict not null,
      review_state review_state not null default 'pending',
      duration_seconds double precision,
      integrated_lufs double precision,
      true_peak_dbtp double precision,
      worst_findings jsonb not null default '[]',
      finding_codes text[] not null default '{}',
      spectrogram_key text,
      waveform_key text,
      created_at timestamptz not null default now(),
      updated_at timestamptz not null default now()
    )`);
    await q(`create index file_results_batch_idx on file_results (batch_id, id)`);
    await q(`create index file_results_history_idx on file_results (collection_id, path, id)`);
    await q(`create index file_results_path_idx on file_results (path, id)`);
    await q(`create index file_results_duration_idx on file_results (duration_seconds nulls first, id)`);
    await q(`create index file_results_verdict_idx on file_results (verdict, id)`);
    await q(`create index file_results_review_idx on file_results (review_state, id)`);
    await q(`create index file_results_lufs_idx on file_results (integrated_lufs nulls first, id)`);
    await q(`create index file_results_true_peak_idx on file_results (true_peak_dbtp nulls first, id)`);
    await q(`create index file_results_created_idx on file_results (created_at, id)`);
    await q(`create index file_results_codes_idx on file_results using gin (finding_codes)`);
    await q(`create index file_results_path_trgm_idx on file_results using gin (path gin_trgm_ops)`);
    // The orphan sweep asks whether a stored object is still referenced.
    await q(`create index file_results_spectrogram_key_idx on file_results (spectrogram_key) where spectrogram_key is not null`);
    await q(`create index file_results_waveform_key_idx on file_results (waveform_key) where waveform_key is not null`);
    await q(`create table findings (
      id serial primary key,
      file_result_id integer not null references file_results(id) on delete cascade,
      code text not null,
      severity finding_severity not null,
      channel integer,
      start_seconds double precision,
      end_seconds double precision,
      message text not null,
      created_at timestamptz not null default now()
    )`);
    await q(`create index findings_file_idx on findings (file_result_id, id)`);
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`drop table findings`);
    await q(`drop table file_results`);
    await q(`drop type finding_severity`);
    await q(`drop type review_state`);
    await q(`drop type verdict`);
  });
};
