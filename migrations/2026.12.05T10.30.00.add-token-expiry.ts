import type { Migration } from "../server/src/db/migrator.ts";

// API tokens expire (issue #19). Tokens made before this get a year from their creation, but at least
// 30 days from the upgrade, so no upload robot stops the moment the server is updated.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`alter table api_tokens add column expires_at timestamptz`);
    await q(`update api_tokens set expires_at = greatest(created_at + interval '1 year', now() + interval '30 days')`);
    await q(`alter table api_tokens alter column expires_at set not null`);
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`alter table api_tokens drop column expires_at`);
};
