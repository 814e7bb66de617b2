import type { Migration } from "../server/src/db/migrator.ts";

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    await sequelize.query(
      `create table collections (
        id serial primary key,
        name text not null unique,
        created_at timestamptz not null default now(),
        updated_at timestamptz not null default now()
      )`,
      { transaction },
    );
    await sequelize.query(
      `create table batches (
        id serial primary key,
        collection_id integer not null references collections(id),
        uploader_id integer not null references users(id),
        batch_key text not null,
        profile_name text not null,
        profile_hash text,
        tool_name text not null,
        tool_version text not null,
        started_at timestamptz not null,
        finished_at timestamptz not null,
        file_count integer not null default 0,
        pass_count integer not null default 0,
        warn_count integer not null default 0,
        fail_count integer not null default 0,
        error_count integer not null default 0,
        created_at timestamptz not null default now(),
        updated_at timestamptz not null default now(),
        -- Ingest is idempotent on this pair.
        constraint batches_uploader_key unique (uploader_id, batch_key)
      )`,
      { transaction },
    );
    await sequelize.query(`create index batches_collection_idx on batches (collection_id, created_at, id)`, { transaction });
    await sequelize.query(`create index batches_created_idx on batches (created_at, id)`, { transaction });
    await sequelize.query(`create index batches_started_idx on batches (started_at, id)`, { transaction });
    await sequelize.query(`create index batches_fail_idx on batches (fail_count, id)`, { transaction });
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    await sequelize.query(`drop table batches`, { transaction });
    await sequelize.query(`drop table collections`, { transaction });
  });
};
