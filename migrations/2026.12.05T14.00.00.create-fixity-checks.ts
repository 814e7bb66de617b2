import type { Migration } from "../server/src/db/migrator.ts";

/** `tidemark verify --upload`: one row per file a verify run checked, for the auditor's fixity history. */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`create table fixity_checks (
      id serial primary key,
      collection_id integer not null references collections(id) on delete cascade,
      path text not null,
      file_result_id integer references file_results(id) on delete set null,
      outcome text not null check (outcome in ('unchanged', 'changed', 'missing', 'unreadable', 'moved')),
      expected_sha256 text,
      actual_sha256 text,
      moved_to text,
      detail text not null default '',
      checked_at timestamptz not null,
      user_id integer not null references users(id),
      token_id text references api_tokens(id) on delete set null,
      created_at timestamptz not null default now()
    )`);
    await q(`create index fixity_checks_path_idx on fixity_checks (collection_id, path, id)`);
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`drop table fixity_checks`);
};
