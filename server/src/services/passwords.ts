/**
 * Password hashing with node:crypto scrypt and the password policy.
 * Stored form: "scrypt$N$r$p$salt$hash" (base64url), so the cost can change without invalidating old hashes.
 */
import { randomBytes, scrypt as scryptCb, timingSafeEqual, type ScryptOptions } from "node:crypto";

export interface ScryptCost {
  N: number;
  r: number;
  p: number;
}

// OWASP Password Storage Cheat Sheet lists N=2^15, r=8, p=3 as equal in strength to its N=2^17 minimum,
// at a quarter of the memory (32 MiB per hash).
export const DEFAULT_SCRYPT_COST: ScryptCost = { N: 2 ** 15, r: 8, p: 3 };
const KEY_LENGTH = 32;

function scrypt(password: string, salt: Buffer, cost: ScryptCost): Promise<Buffer> {
  const options: ScryptOptions = { N: cost.N, r: cost.r, p: cost.p, maxmem: 256 * cost.N * cost.r + 1024 * 1024 };
  return new Promise((resolve, reject) =>
    scryptCb(password.normalize("NFC"), salt, KEY_LENGTH, options, (err, key) => (err ? reject(err) : resolve(key))),
  );
}

export async function hashPassword(password: string, cost: ScryptCost = DEFAULT_SCRYPT_COST): Promise<string> {
  const salt = randomBytes(16);
  const key = await scrypt(password, salt, cost);
  return ["scrypt", cost.N, cost.r, cost.p, salt.toString("base64url"), key.toString("base64url")].join("$");
}

export async function verifyPassword(password: string, stored: string): Promise<boolean> {
  const [scheme, n, r, p, salt, hash] = stored.split("$");
  if (scheme !== "scrypt" || !salt || !hash) return false;
  const expected = Buffer.from(hash, "base64url");
  const actual = await scrypt(password, Buffer.from(salt, "base64url"), { N: Number(n), r: Number(r), p: Number(p) });
  // OWASP: constant-time compare.
  return actual.length === expected.length && timingSafeEqual(actual, expected);
}

/** A hash of a random password: verifying against it costs the same as a real user's, so timing says nothing. */
let dummyHash: Promise<string> | null = null;
export function dummyPasswordHash(cost: ScryptCost): Promise<string> {
  dummyHash ??= hashPassword(randomBytes(16).toString("hex"), cost);
  return dummyHash;
}

export const PASSWORD_MIN_LENGTH = 12;
export const PASSWORD_MAX_LENGTH = 256;

/** Null when acceptable, otherwise why not (NIST SP 800-63B §5.1.1.2: length over composition rules). */
export function passwordProblem(password: string, email: string): string | null {
  if (password.length < PASSWORD_MIN_LENGTH) return `password must be at least ${PASSWORD_MIN_LENGTH} characters`;
  if (password.length > PASSWORD_MAX_LENGTH) return `password must be at most ${PASSWORD_MAX_LENGTH} characters`;
  const lower = password.toLowerCase();
  const address = email.trim().toLowerCase();
  const localPart = address.split("@")[0] ?? "";
  if (lower === address || (localPart.length >= 4 && lower.includes(localPart))) {
    return "password must not contain the e-mail address";
  }
  if (new Set(lower).size < 4) return "password must use at least 4 different characters";
  return null;
}
