/** Session helpers around express-session: promisified regenerate/save/destroy, and ending a user's sessions. */
import type { Request } from "express";
import type { Sequelize, Transaction } from "sequelize";

export function regenerateSession(req: Request): Promise<void> {
  return new Promise((resolve, reject) => req.session.regenerate((err: unknown) => (err ? reject(err) : resolve())));
}

export function saveSession(req: Request): Promise<void> {
  return new Promise((resolve, reject) => req.session.save((err: unknown) => (err ? reject(err) : resolve())));
}

export function destroySession(req: Request): Promise<void> {
  return new Promise((resolve, reject) => req.session.destroy((err: unknown) => (err ? reject(err) : resolve())));
}

/** Signs a user out everywhere (password change or reset, account disabled). */
export async function endSessionsOf(sequelize: Sequelize, userId: number, transaction?: Transaction): Promise<void> {
  await sequelize.query(`delete from sessions where (sess->>'userId') = :userId`, {
    replacements: { userId: String(userId) },
    transaction,
  });
}
