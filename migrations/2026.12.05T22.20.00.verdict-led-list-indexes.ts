import type { Migration } from "../server/src/db/migrator.ts";

// Issue #22: two first pages walked most of a covering index before their first match (EXPLAIN ANALYZE at
// 1 M rows, 2026-12-05): `verdict=error` by a level, descending, passed the ≈920 000 files that have levels
// (an unreadable file has none, so it sorts last): 185–215 ms, 0.5–0.8 s under load; a finding filter by
// verdict ascending passed the ≈600 000 passing files, which have no findings: 95–290 ms.
// - (verdict, level or duration, id) reaches one verdict's files in level order directly: the page is its first 51 entries.
//   Partial, without the passing files: most files pass (common practice; 60 % of the load test's), so a pass
//   filter finds its page at once along the sort's covering index, and leaving them out took the two indexes
//   from 39 to 16 MB each and most of their cost off ingest (a 5 000-row INSERT at 1 M rows: +20–25 % with
//   the full indexes and all three, ≈ +8 % so, load average ≈ 5 on 2 cores).
// - (verdict, id) over the files that have findings only (partial), INCLUDE the filter columns like the covering
//   indexes (38 MB); fileList.ts states `finding_codes <> '{}'` beside a finding filter so the planner may use it.
// Built in the migration's transaction like the covering indexes (≈1 s each at 1 M rows).
const INDEXES: [string, string][] = [
  ["file_results_verdict_lufs_idx", "(verdict, lufs_sort, id) where verdict <> 'pass'"],
  ["file_results_verdict_true_peak_idx", "(verdict, true_peak_sort, id) where verdict <> 'pass'"],
  // An unreadable file has no duration either: the first load run with the two above had `verdict=error` by
  // duration, descending, as its slowest request (285 ms, page 7).
  ["file_results_verdict_duration_idx", "(verdict, duration_sort, id) where verdict <> 'pass'"],
  [
    "file_results_findings_verdict_idx",
    "(verdict, id) include (review_state, collection_id, batch_id, finding_codes, path) where finding_codes <> '{}'",
  ],
];

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    for (const [name, def] of INDEXES) await sequelize.query(`create index ${name} on file_results ${def}`, { transaction });
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    for (const [name] of INDEXES) await sequelize.query(`drop index ${name}`, { transaction });
  });
};
