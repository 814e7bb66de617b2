import type { Migration } from "../server/src/db/migrator.ts";

// Issue #17: a queued file whose name is not UTF-8 carries its exact bytes (base64, the report's `pathBytes`),
// so a worker opens that file and not a look-alike, and two look-alike names in one run are two jobs. A job
// is now one per (run, path, bytes); names that are valid UTF-8 keep path_bytes null, as before.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`alter table scan_jobs add column path_bytes text`);
  await sequelize.query(`alter table scan_jobs drop constraint scan_jobs_run_path`);
  await sequelize.query(`create unique index scan_jobs_run_path_bytes on scan_jobs (run_id, path, coalesce(path_bytes, ''))`);
};

// Back to one job per display path: look-alike jobs beyond the first of each path are removed first.
export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`drop index scan_jobs_run_path_bytes`);
  await sequelize.query(
    `delete from scan_jobs j using scan_jobs k where j.run_id = k.run_id and j.path = k.path and j.id > k.id`,
  );
  await sequelize.query(`alter table scan_jobs add constraint scan_jobs_run_path unique (run_id, path)`);
  await sequelize.query(`alter table scan_jobs drop column path_bytes`);
};
