/** Ending a user's stored sessions (the request's own session is middleware/requestSession.ts's). */
import type { Sequelize, Transaction } from "sequelize";

/** Signs a user out everywhere (password change or reset, account disabled). */
export async function endSessionsOf(sequelize: Sequelize, userId: number, transaction?: Transaction): Promise<void> {
  await sequelize.query(`delete from sessions where (sess->>'userId') = :userId`, {
    replacements: { userId: String(userId) },
    transaction,
  });
}
