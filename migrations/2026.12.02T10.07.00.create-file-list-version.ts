import type { Migration } from "../server/src/db/migrator.ts";

// A counter that moves with every committed change to file_results (trigger, so no writer can forget
// it). The server caches list totals per filter under it: GET /api/files counts 100 k rows only when
// something changed. The row lock lasts from a transaction's first file_results write to its commit.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`create table file_list_version (
      id boolean primary key default true check (id),
      version bigint not null
    )`);
    await q(`insert into file_list_version (id, version) values (true, 0)`);
    await q(`create function bump_file_list_version() returns trigger language plpgsql as $$
      begin
        update file_list_version set version = version + 1;
        return null;
      end
    $$`);
    await q(`create trigger file_results_list_version after insert or update or delete or truncate on file_results
      for each statement execute function bump_file_list_version()`);
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    await sequelize.query(`drop trigger file_results_list_version on file_results`, { transaction });
    await sequelize.query(`drop function bump_file_list_version()`, { transaction });
    await sequelize.query(`drop table file_list_version`, { transaction });
  });
};
