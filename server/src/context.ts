/** What routes and services share: the database, the object store, the mailer, the logger, settings. */
import { tmpdir } from "node:os";
import path from "node:path";
import type { Sequelize } from "sequelize";
import type { Logger } from "./logger.ts";
import type { Mailer } from "./mail/mailer.ts";
import { DEFAULT_SCRYPT_COST, type ScryptCost } from "./services/passwords.ts";
import type { ObjectStore } from "./storage/ObjectStore.ts";

export interface RateLimitSettings {
  windowMs: number;
  limit: number;
}

/** Multipart upload limits (PART_KINDS in services/ingestValidation.ts says which applies to which part). */
export interface UploadLimits {
  /** The report JSON part. */
  maxReportBytes: number;
  /** Each PNG part (overview and close-up spectrograms and waveforms). */
  maxImageBytes: number;
  /** Each JSON artefact part (level grid, loudness curve). */
  maxJsonPartBytes: number;
  /** Each audio excerpt part (FLAC or WAV). */
  maxExcerptBytes: number;
  /** File parts besides the report, per upload. */
  maxImages: number;
  /**
   * The whole body, whatever the report says; a report that arrives first narrows it to what the report
   * can carry (its size plus, per file and per close-up, each part kind's cap).
   */
  maxTotalBytes: number;
}

export interface AppSettings {
  publicUrl: string;
  sessionSecret: string;
  trustProxy: boolean | number | string;
  /** Built portal to serve at /, or null to serve the API only. */
  webDistDir: string | null;
  /** Folder holding `npm run pack:cli`'s tarball, offered for download; null offers none. */
  cliPackageDir: string | null;
  passwordCost: ScryptCost;
  /** Failed sign-ins per client address. */
  loginRateLimit: RateLimitSettings;
  /** Failed sign-ins per account (the e-mail as typed, lower-cased), from any number of addresses. */
  loginAccountRateLimit: RateLimitSettings;
  /** Password-reset requests per client address. */
  passwordResetRateLimit: RateLimitSettings;
  passwordResetTtlMs: number;
  sessionMaxAgeMs: number;
  upload: UploadLimits;
  /** Multipart parts land here before they are checked. */
  uploadTmpDir: string;
}

/** What a caller may override: any setting, and any single upload limit. */
export type SettingsOverrides = Partial<Omit<AppSettings, "upload">> & { upload?: Partial<UploadLimits> };

const MiB = 1024 * 1024;
export const DEFAULT_UPLOAD_LIMITS: UploadLimits = {
  maxReportBytes: 64 * MiB,
  maxImageBytes: 16 * MiB,
  maxJsonPartBytes: 16 * MiB,
  // The CLI's default per-file budget is 20 MB for all of a file's excerpts together.
  maxExcerptBytes: 32 * MiB,
  maxImages: 100_000,
  maxTotalBytes: 2048 * MiB,
};

export const DEFAULT_SETTINGS: Omit<AppSettings, "publicUrl" | "sessionSecret"> = {
  trustProxy: false,
  webDistDir: null,
  cliPackageDir: null,
  passwordCost: DEFAULT_SCRYPT_COST,
  loginRateLimit: { windowMs: 15 * 60_000, limit: 10 },
  loginAccountRateLimit: { windowMs: 15 * 60_000, limit: 10 },
  passwordResetRateLimit: { windowMs: 15 * 60_000, limit: 5 },
  passwordResetTtlMs: 60 * 60_000,
  sessionMaxAgeMs: 12 * 60 * 60_000,
  upload: DEFAULT_UPLOAD_LIMITS,
  uploadTmpDir: path.join(tmpdir(), "tidemark-uploads"),
};

export interface AppContext {
  sequelize: Sequelize;
  store: ObjectStore;
  mailer: Mailer;
  logger: Logger;
  settings: AppSettings;
}
