/**
 * Server configuration, read from the environment once (main.ts). Everything else receives a Config.
 */
import { randomBytes } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import type { UploadLimits } from "./context.ts";
import { projectRoot } from "./paths.ts";

export type ObjectStoreConfig =
  | { kind: "fs"; dir: string }
  | {
      kind: "s3";
      bucket: string;
      region: string;
      endpoint: string | null;
      accessKeyId: string | null;
      secretAccessKey: string | null;
      forcePathStyle: boolean;
      prefix: string;
    };

export interface Config {
  databaseUrl: string;
  port: number;
  host: string;
  /** Where people reach the portal; e-mailed links start with it. */
  publicUrl: string;
  sessionSecret: string;
  /** Null: messages are written as .eml files to mailDir instead of being sent. */
  smtpUrl: string | null;
  mailFrom: string;
  mailDir: string;
  dataDir: string;
  objectStore: ObjectStoreConfig;
  webDistDir: string;
  /** Where `npm run pack:cli` leaves the CLI tarball (CLI_PACKAGE_DIR, default cli/pack). */
  cliPackageDir: string;
  /** Express "trust proxy" setting: false, a hop count, or a list of addresses/subnets. */
  trustProxy: boolean | number | string;
  demoPassword: string;
  /** Seed the demo on an empty database (off in production unless asked for). */
  demoSeed: boolean;
  /** Upload limits set in the environment; the rest keep their defaults (context.ts). */
  upload: Partial<UploadLimits>;
}

export class ConfigError extends Error {}

function parsePort(raw: string | undefined, fallback: number, name: string): number {
  if (raw === undefined || raw === "") return fallback;
  const n = Number(raw);
  if (!Number.isInteger(n) || n < 0 || n > 65535) throw new ConfigError(`${name} must be a port number 0–65535, got "${raw}"`);
  return n;
}

export function parseTrustProxy(raw: string | undefined): boolean | number | string {
  if (raw === undefined || raw === "" || raw === "false" || raw === "0") return false;
  if (raw === "true") return true;
  if (/^\d+$/.test(raw)) return Number(raw);
  return raw;
}

function parseBoolean(raw: string | undefined, fallback: boolean, name: string): boolean {
  if (raw === undefined || raw === "") return fallback;
  if (["1", "true", "yes"].includes(raw.toLowerCase())) return true;
  if (["0", "false", "no"].includes(raw.toLowerCase())) return false;
  throw new ConfigError(`${name} must be true or false, got "${raw}"`);
}

/** An unset SESSION_SECRET gets a random one, kept under .data so sessions survive restarts. */
function sessionSecretFrom(raw: string | undefined, dataDir: string): string {
  if (raw) {
    if (raw.length < 32) throw new ConfigError("SESSION_SECRET must be at least 32 characters");
    return raw;
  }
  const file = path.join(dataDir, "session-secret");
  if (existsSync(file)) return readFileSync(file, "utf8").trim();
  mkdirSync(dataDir, { recursive: true });
  const secret = randomBytes(32).toString("base64url");
  writeFileSync(file, secret + "\n", { mode: 0o600 });
  return secret;
}

function objectStoreFrom(env: NodeJS.ProcessEnv, dataDir: string): ObjectStoreConfig {
  const kind = env.OBJECT_STORE || "fs";
  if (kind === "fs") return { kind, dir: path.resolve(projectRoot, env.OBJECT_STORE_DIR || path.join(dataDir, "objects")) };
  if (kind !== "s3") throw new ConfigError(`OBJECT_STORE must be "fs" or "s3", got "${kind}"`);
  if (!env.S3_BUCKET) throw new ConfigError("OBJECT_STORE=s3 needs S3_BUCKET");
  return {
    kind,
    bucket: env.S3_BUCKET,
    region: env.S3_REGION || "us-east-1",
    endpoint: env.S3_ENDPOINT || null,
    accessKeyId: env.S3_ACCESS_KEY_ID || null,
    secretAccessKey: env.S3_SECRET_ACCESS_KEY || null,
    forcePathStyle: parseBoolean(env.S3_FORCE_PATH_STYLE, Boolean(env.S3_ENDPOINT), "S3_FORCE_PATH_STYLE"),
    prefix: env.S3_PREFIX || "",
  };
}

const SIZE_UNITS: Record<string, number> = { "": 1, k: 1024, m: 1024 ** 2, g: 1024 ** 3 };

/** "1048576", "512k", "64M", "2G" (binary units) → bytes. */
export function parseSize(raw: string, name: string): number {
  const match = /^(\d+)\s*([kmg]?)i?b?$/i.exec(raw.trim());
  const bytes = match ? Number(match[1]) * SIZE_UNITS[match[2].toLowerCase()] : NaN;
  if (!Number.isSafeInteger(bytes) || bytes <= 0) throw new ConfigError(`${name} must be a size such as 16M or 1048576, got "${raw}"`);
  return bytes;
}

const UPLOAD_ENV: [keyof UploadLimits, string][] = [
  ["maxReportBytes", "UPLOAD_MAX_REPORT"],
  ["maxImageBytes", "UPLOAD_MAX_IMAGE"],
  ["maxJsonPartBytes", "UPLOAD_MAX_JSON_PART"],
  ["maxExcerptBytes", "UPLOAD_MAX_EXCERPT"],
  ["maxTotalBytes", "UPLOAD_MAX_TOTAL"],
];

function uploadLimitsFrom(env: NodeJS.ProcessEnv): Partial<UploadLimits> {
  const limits: Partial<UploadLimits> = {};
  for (const [key, name] of UPLOAD_ENV) if (env[name]) limits[key] = parseSize(env[name], name);
  if (env.UPLOAD_MAX_PARTS) {
    const n = Number(env.UPLOAD_MAX_PARTS);
    if (!Number.isSafeInteger(n) || n < 1) throw new ConfigError(`UPLOAD_MAX_PARTS must be a whole number ≥ 1, got "${env.UPLOAD_MAX_PARTS}"`);
    limits.maxImages = n;
  }
  return limits;
}

/** Defaults `npm start` (scripts/stack.ts) shares with the server: where it listens, the demo accounts' password. */
export const DEFAULT_HOST = "127.0.0.1";
export const DEFAULT_PORT = 8080;
export const DEFAULT_DEMO_PASSWORD = "harbourside-demo";

export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  if (!env.DATABASE_URL) throw new ConfigError("DATABASE_URL is not set (e.g. postgres://user@127.0.0.1:5432/tidemark)");
  const dataDir = path.resolve(projectRoot, env.DATA_DIR || ".data");
  const port = parsePort(env.PORT, DEFAULT_PORT, "PORT");
  const host = env.HOST || DEFAULT_HOST;
  const publicUrl = (env.PUBLIC_URL || `http://${host}:${port}`).replace(/\/+$/, "");
  try {
    new URL(publicUrl);
  } catch {
    throw new ConfigError(`PUBLIC_URL must be an absolute URL, got "${publicUrl}"`);
  }
  return {
    databaseUrl: env.DATABASE_URL,
    port,
    host,
    publicUrl,
    sessionSecret: sessionSecretFrom(env.SESSION_SECRET, dataDir),
    smtpUrl: env.SMTP_URL || null,
    mailFrom: env.MAIL_FROM || "Tidemark <tidemark@harbourside.test>",
    mailDir: path.join(dataDir, "mail"),
    dataDir,
    objectStore: objectStoreFrom(env, dataDir),
    webDistDir: path.resolve(projectRoot, env.WEB_DIST_DIR || "web/dist"),
    cliPackageDir: path.resolve(projectRoot, env.CLI_PACKAGE_DIR || "cli/pack"),
    trustProxy: parseTrustProxy(env.TRUST_PROXY),
    demoPassword: env.DEMO_PASSWORD || DEFAULT_DEMO_PASSWORD,
    demoSeed: parseBoolean(env.DEMO_SEED, env.NODE_ENV !== "production", "DEMO_SEED"),
    upload: uploadLimitsFrom(env),
  };
}
