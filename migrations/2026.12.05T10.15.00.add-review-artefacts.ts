import type { Migration } from "../server/src/db/migrator.ts";

// Review where the fault is (issue #16). file_results: the level grid and loudness curve objects, the
// close-ups (jsonb: window, finding indexes and their object keys) and what the report left out, plus
// artefact_keys, every object key of those (GIN), so the orphan sweep and a batch delete find them in
// one lookup. batches.profile_limits: the scan profile's loudness and peak limits for the overview.
// comments: an optional anchor in time and channel.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`alter table file_results
      add column level_grid_key text,
      add column loudness_curve_key text,
      add column closeups jsonb not null default '[]',
      add column closeups_omitted jsonb not null default '[]',
      add column artefact_keys text[] not null default '{}'`);
    await q(`create index file_results_artefact_keys_idx on file_results using gin (artefact_keys)`);
    await q(`alter table batches add column profile_limits jsonb`);
    await q(`alter table comments
      add column at_seconds double precision check (at_seconds >= 0),
      add column channel integer check (channel >= 0)`);
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`alter table comments drop column at_seconds, drop column channel`);
    await q(`alter table batches drop column profile_limits`);
    await q(`drop index file_results_artefact_keys_idx`);
    await q(`alter table file_results drop column level_grid_key, drop column loudness_curve_key, drop column closeups,
      drop column closeups_omitted, drop column artefact_keys`);
  });
};
