import type { Migration } from "../server/src/db/migrator.ts";

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`create table comments (
      id serial primary key,
      file_result_id integer not null references file_results(id) on delete cascade,
      author_id integer not null references users(id),
      body text not null,
      created_at timestamptz not null default now(),
      updated_at timestamptz not null default now()
    )`);
    await q(`create index comments_file_idx on comments (file_result_id, created_at, id)`);
    await q(`create table review_events (
      id serial primary key,
      file_result_id integer not null references file_results(id) on delete cascade,
      actor_id integer not null references users(id),
      from_state review_state not null,
      to_state review_state not null,
      reason text not null default '',
      created_at timestamptz not null default now()
    )`);
    await q(`create index review_events_file_idx on review_events (file_result_id, created_at, id)`);
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    await sequelize.query(`drop table review_events`, { transaction });
    await sequelize.query(`drop table comments`, { transaction });
  });
};
