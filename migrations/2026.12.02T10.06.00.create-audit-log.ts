import type { Migration } from "../server/src/db/migrator.ts";

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    // actor_id is kept without a foreign key on purpose: the trail must outlive any user row.
    await q(`create table audit_log (
      id serial primary key,
      actor_id integer,
      action text not null,
      target_type text not null,
      target_id text,
      request_id text,
      details jsonb,
      created_at timestamptz not null default now()
    )`);
    await q(`create index audit_log_created_idx on audit_log (created_at, id)`);
    await q(`create index audit_log_actor_idx on audit_log (actor_id, id)`);
    await q(`create index audit_log_action_idx on audit_log (action, id)`);
    await q(`create index audit_log_target_idx on audit_log (target_type, target_id, id)`);
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`drop table audit_log`);
};
