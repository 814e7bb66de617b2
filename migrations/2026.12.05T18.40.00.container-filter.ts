import type { Migration } from "../server/src/db/migrator.ts";

// Issue #17: the Files list filters by container ("flac", "aiff", "aifc", the WAV family), kept in `format`
// (JSONB). An index on the expression finds a rare container's rows (a bitmap, then the page's sort); a
// common one is read along the sort's covering index, checking each row's format, as the planner sees fit.
// Not a stored column in the covering indexes: that widened every row, and the search estimate's page sample
// (fileList.ts, searchEstimate) read a different, skewed share of the test archive's paths.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`create index file_results_container_idx on file_results ((format ->> 'container'))`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`drop index file_results_container_idx`);
};
