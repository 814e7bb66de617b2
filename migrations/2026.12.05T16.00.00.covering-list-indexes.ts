import type { Migration } from "../server/src/db/migrator.ts";

// Issue #22: GET /api/files at 1 000 000 rows. Each sort key gets one covering index, (sort value, id)
// INCLUDE every column the list filters on, so a filtered, sorted page (and the seek of a cursor) is an
// index-only walk: at 1 M rows a heap visit per skipped row cost 0.1–7 s, the index alone ~1 µs a row.
// The nullable sort keys get a stored copy where NULL (a quiet −∞ level, or no duration) is −Infinity,
// still the smallest value, so a cursor is one row comparison `(value, id) > ($1, $2)` the index can seek.
// On a populated table this rewrites file_results once (≈ 30 s per million rows on a busy 2-core machine).
const FILTER_COLUMNS = ["verdict", "review_state", "collection_id", "batch_id", "finding_codes"];

const NULLABLE: [string, string][] = [
  ["duration_sort", "duration_seconds"],
  ["lufs_sort", "integrated_lufs"],
  ["true_peak_sort", "true_peak_dbtp"],
];

// [index, sort column]; `path` is included too except where it is the key (the `q` filter reads it).
const COVERING: [string, string][] = [
  ["file_results_list_path_idx", "path"],
  ["file_results_list_duration_idx", "duration_sort"],
  ["file_results_list_verdict_idx", "verdict"],
  ["file_results_list_review_idx", "review_state"],
  ["file_results_list_lufs_idx", "lufs_sort"],
  ["file_results_list_true_peak_idx", "true_peak_sort"],
  ["file_results_list_created_idx", "created_at"],
];

// The indexes of the first file_results migration that these replace, to restore on the way down.
const REPLACED: [string, string][] = [
  ["file_results_path_idx", "(path, id)"],
  ["file_results_duration_idx", "(duration_seconds nulls first, id)"],
  ["file_results_verdict_idx", "(verdict, id)"],
  ["file_results_review_idx", "(review_state, id)"],
  ["file_results_lufs_idx", "(integrated_lufs nulls first, id)"],
  ["file_results_true_peak_idx", "(true_peak_dbtp nulls first, id)"],
  ["file_results_created_idx", "(created_at, id)"],
];

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    const added = NULLABLE.map(([col, src]) => `add column ${col} double precision generated always as (coalesce(${src}, '-Infinity'::float8)) stored`);
    await q(`alter table file_results ${added.join(", ")}`);
    for (const [name] of REPLACED) await q(`drop index ${name}`);
    for (const [name, col] of COVERING) {
      const included = [...FILTER_COLUMNS, ...(col === "path" ? [] : ["path"])].filter((c) => c !== col);
      await q(`create index ${name} on file_results (${col}, id) include (${included.join(", ")})`);
    }
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    for (const [name] of COVERING) await q(`drop index ${name}`);
    await q(`alter table file_results ${NULLABLE.map(([col]) => `drop column ${col}`).join(", ")}`);
    for (const [name, def] of REPLACED) await q(`create index ${name} on file_results ${def}`);
  });
};
