/**
 * Password reset by e-mailed link: a 256-bit random token, stored only as its SHA-256, single use,
 * expiring (default one hour). Consuming it is one conditional UPDATE, so two clicks cannot both win.
 */
import { createHash, randomBytes } from "node:crypto";
import { Op } from "sequelize";
import type { AppContext } from "../context.ts";
import { HttpError } from "../errors.ts";
import { mailLine } from "../mail/template.ts";
import { PasswordReset, User } from "../models/index.ts";
import { hashPassword, passwordProblem } from "./passwords.ts";
import { endSessionsOf } from "./sessions.ts";
import { findUserByEmail } from "./signIn.ts";

const sha256Hex = (s: string): string => createHash("sha256").update(s).digest("hex");

/** Creates a reset for an active account and e-mails the link; silently does nothing otherwise. */
export async function requestPasswordReset(ctx: AppContext, email: string): Promise<{ userId: number } | null> {
  const user = await findUserByEmail(email);
  if (!user || user.disabled) return null;
  const token = randomBytes(32).toString("base64url");
  await PasswordReset.create({
    userId: user.id,
    tokenHash: sha256Hex(token),
    expiresAt: new Date(Date.now() + ctx.settings.passwordResetTtlMs),
  });
  const link = `${ctx.settings.publicUrl}/reset-password?token=${encodeURIComponent(token)}`;
  const minutes = Math.round(ctx.settings.passwordResetTtlMs / 60_000);
  ctx.mailer.send({
    to: [user.email],
    subject: "Tidemark: reset your password",
    text: [
      mailLine`Hello ${user.name},`,
      "",
      "Someone asked to reset the password of your Tidemark account. To choose a new password, open:",
      "",
      link,
      "",
      `The link works once and expires in ${minutes} minutes. If you did not ask for this, ignore this message;`,
      "your password stays as it is.",
    ].join("\n"),
  });
  return { userId: user.id };
}

const invalidToken = (): HttpError =>
  new HttpError(400, "invalid_reset_token", "this reset link is invalid, already used or expired; ask for a new one");

/** Sets the new password and consumes the token; returns the user. */
export async function confirmPasswordReset(ctx: AppContext, token: string, password: string): Promise<User> {
  const tokenHash = sha256Hex(token);
  const live = { tokenHash, usedAt: null, expiresAt: { [Op.gt]: new Date() } };
  const reset = await PasswordReset.findOne({ where: live });
  const user = reset ? await User.findByPk(reset.userId) : null;
  if (!reset || !user || user.disabled) throw invalidToken();
  // Check the policy before consuming the token, so a rejected password does not burn the link.
  const problem = passwordProblem(password, user.email);
  if (problem) throw new HttpError(422, "weak_password", problem);
  const passwordHash = await hashPassword(password, ctx.settings.passwordCost);
  await ctx.sequelize.transaction(async (transaction) => {
    const [consumed] = await PasswordReset.update({ usedAt: new Date() }, { where: { id: reset.id, ...live }, transaction });
    if (consumed !== 1) throw invalidToken();
    // Every other outstanding link for this account dies with this one.
    await PasswordReset.update({ usedAt: new Date() }, { where: { userId: user.id, usedAt: null }, transaction });
    await User.update({ passwordHash }, { where: { id: user.id }, transaction });
    await endSessionsOf(ctx.sequelize, user.id, transaction);
  });
  return user;
}
