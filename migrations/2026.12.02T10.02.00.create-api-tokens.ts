import type { Migration } from "../server/src/db/migrator.ts";

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    await sequelize.query(
      `create table api_tokens (
        id text primary key,
        user_id integer not null references users(id) on delete cascade,
        name text not null,
        secret_hash text not null,
        created_at timestamptz not null default now(),
        last_used_at timestamptz,
        revoked_at timestamptz
      )`,
      { transaction },
    );
    await sequelize.query(`create index api_tokens_user_idx on api_tokens (user_id, created_at)`, { transaction });
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`drop table api_tokens`);
};
