/**
 * API tokens for the CLI and CI: "id:secret". The id is public; only SHA-256 of the 256-bit random
 * secret is stored (a slow hash adds nothing for secrets this long), and it is compared in constant time.
 */
import { createHash, randomBytes, timingSafeEqual } from "node:crypto";
import { Op, type Transaction } from "sequelize";
import { DEFAULT_TOKEN_LIFETIME_DAYS } from "@tidemark/shared/contracts/tokens";
import { ApiToken, User } from "../models/index.ts";

const sha256Hex = (s: string): string => createHash("sha256").update(s).digest("hex");

const DAY_MS = 24 * 60 * 60_000;

export async function createApiToken(
  userId: number,
  name: string,
  transaction?: Transaction,
  lifetimeDays = DEFAULT_TOKEN_LIFETIME_DAYS,
): Promise<{ token: ApiToken; plaintext: string }> {
  const id = `tm${randomBytes(8).toString("hex")}`;
  const secret = randomBytes(32).toString("base64url");
  const expiresAt = new Date(Date.now() + lifetimeDays * DAY_MS);
  const token = await ApiToken.create({ id, userId, name, secretHash: sha256Hex(secret), expiresAt }, { transaction });
  return { token, plaintext: `${id}:${secret}` };
}

/** Splits "id:secret"; null when malformed. */
export function splitToken(raw: string): { id: string; secret: string } | null {
  const at = raw.indexOf(":");
  if (at <= 0 || at === raw.length - 1) return null;
  return { id: raw.slice(0, at), secret: raw.slice(at + 1) };
}

const DUMMY_HASH = sha256Hex("no such token");
const LAST_USED_RESOLUTION_MS = 60_000;

/** The live token with its owner, or null (unknown id, wrong secret, revoked, expired). */
export async function verifyApiToken(id: string, secret: string): Promise<ApiToken | null> {
  const token = id.length <= 64 ? await ApiToken.findByPk(id, { include: [{ model: User, as: "owner" }] }) : null;
  const expected = Buffer.from(token?.secretHash ?? DUMMY_HASH, "hex");
  const actual = Buffer.from(sha256Hex(secret), "hex");
  // OWASP: constant-time compare (and a compare even for unknown ids).
  const matches = timingSafeEqual(actual, expected);
  if (!token || !matches || token.revokedAt || token.expiresAt.getTime() <= Date.now()) return null;
  // Coarse last-use time: one write a minute per token, not one per request.
  const now = Date.now();
  if (!token.lastUsedAt || now - token.lastUsedAt.getTime() > LAST_USED_RESOLUTION_MS) {
    await ApiToken.update({ lastUsedAt: new Date(now) }, { where: { id } });
  }
  return token;
}

/** Revokes every live token of a user, for good: enabling the user again does not bring them back. */
export async function revokeTokensOf(userId: number, transaction?: Transaction): Promise<number> {
  const [count] = await ApiToken.update({ revokedAt: new Date() }, { where: { userId, revokedAt: { [Op.is]: null } }, transaction });
  return count;
}
