import type { Migration } from "../server/src/db/migrator.ts";

// The column layout connect-pg-simple expects (its table.sql), under our own table name.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    await sequelize.query(
      `create table sessions (
        sid varchar not null primary key,
        sess json not null,
        expire timestamp(6) not null
      )`,
      { transaction },
    );
    await sequelize.query(`create index sessions_expire_idx on sessions (expire)`, { transaction });
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`drop table sessions`);
};
