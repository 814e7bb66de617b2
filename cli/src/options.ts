/**
 * Option parsers and the normalised option objects the commands receive. Parsers throw commander's
 * InvalidArgumentError, so a bad value is reported as "option '--workers <n>' argument 'x' is invalid. …".
 */
import { availableParallelism } from "node:os";
import { InvalidArgumentError } from "commander";
import { REPORT_FORMATS, type ReportFormat } from "@tidemark/shared/report/reportFormats";

export { REPORT_FORMATS, type ReportFormat };

/** Matched case-insensitively against file names (README.md › `tidemark scan`: WAV, BWF, RF64, FLAC, AIFF transfers). */
export const DEFAULT_INCLUDE_GLOBS = ["*.wav", "*.bwf", "*.rf64", "*.flac", "*.aif", "*.aiff", "*.aifc"] as const;

export const MAX_WORKERS = 64;

export function parseWorkerCount(value: string): number {
  const n = Number(value);
  if (!/^\d+$/.test(value.trim()) || !Number.isInteger(n) || n < 1 || n > MAX_WORKERS) {
    throw new InvalidArgumentError(`expected a whole number of workers from 1 to ${MAX_WORKERS}, got "${value}".`);
  }
  return n;
}

export function defaultWorkerCount(): number {
  return Math.max(1, Math.min(MAX_WORKERS, availableParallelism()));
}

/** An http(s) base URL without a trailing slash. */
export function parseServerUrl(value: string): string {
  let url: URL;
  try {
    url = new URL(value);
  } catch {
    throw new InvalidArgumentError(`expected a server URL such as https://qc.example.org, got "${value}".`);
  }
  if (url.protocol !== "http:" && url.protocol !== "https:") {
    throw new InvalidArgumentError(`expected an http:// or https:// URL, got "${value}".`);
  }
  return url.href.replace(/\/+$/, "");
}

export function parseBatchKey(value: string): string {
  // Printable ASCII, bounded: it travels as a form field and is shown in the portal.
  if (!/^[\x21-\x7e]{1,200}$/.test(value)) {
    throw new InvalidArgumentError(`expected 1 to 200 printable characters without spaces, got "${value}".`);
  }
  return value;
}

export function parseCollectionName(value: string): string {
  const name = value.trim();
  if (name.length === 0 || name.length > 200) {
    throw new InvalidArgumentError(`expected a collection name of 1 to 200 characters, got "${value}".`);
  }
  return name;
}

export function parseToken(value: string): string {
  if (!/^[^\s:]+:[^\s]+$/.test(value)) throw new InvalidArgumentError(`expected a token of the form id:secret, got "${value.slice(0, 40)}".`);
  return value;
}

export function collect(value: string, previous: string[]): string[] {
  return [...previous, value];
}

export interface UploadTarget {
  server: string | null;
  collection: string | null;
  batchKey: string | null;
}

/** `--fail-on`: the verdict from which a run exits 1. */
export const FAIL_ON_LEVELS = ["fail", "warn"] as const;

/** `--progress`: auto shows a live line on a terminal only; json writes one JSON object a line to stderr. */
export const PROGRESS_MODES = ["auto", "json"] as const;
export type ProgressMode = (typeof PROGRESS_MODES)[number];

export interface ScanOptions {
  profile: string;
  /** Whether the profile was asked for, came from tidemark.json, or is the built-in default. */
  profileFrom: "flag" | "tidemark.json" | "default";
  /** null: table on a TTY, else from --out's extension, else json. */
  format: ReportFormat | null;
  out: string | null;
  spectrograms: string | null;
  /** false with --no-fingerprint: no duplicate-detection fingerprint in the report. */
  fingerprint: boolean;
  /** false with --no-closeups: no close-ups, level grid or loudness curve beside the PNGs. */
  closeups: boolean;
  workers: number;
  /** --spectral-thread (true) / --no-spectral-thread (false); absent: a long file's spectral side on a second thread when the workers leave a core spare. */
  spectralThread?: boolean;
  include: string[];
  exclude: string[];
  resume: string | null;
  quiet: boolean;
  progress: ProgressMode;
  failOn: "fail" | "warn";
  /** --checksums: md5sum/sha256sum-style manifests whose lines each file is checked against. */
  checksums: string[];
  /** --bag: write a BagIt bag of the scanned files, with the report as a tag file, into this folder. */
  bag: string | null;
  /** null unless --upload was given. */
  upload: UploadTarget | null;
}

export interface VerifyOptions {
  /** The earlier report; null verifies a BagIt bag against its own manifests. */
  against: string | null;
  include: string[];
  exclude: string[];
  json: boolean;
  quiet: boolean;
  progress: ProgressMode;
  /** --checksums manifests, as for scan. */
  checksums: string[];
  /** --upload: send each file's outcome to the server's fixity history (null without it). */
  upload: { server: string | null; collection: string | null } | null;
}

/** `tidemark init`: what to write into tidemark.json (null: ask on a terminal, else leave out). */
export interface InitOptions {
  profile: string | null;
  collection: string | null;
  server: string | null;
  include: string[];
  exclude: string[];
  spectrograms: string | null;
  failOn: "fail" | "warn" | null;
  /** Overwrite an existing tidemark.json. */
  force: boolean;
  /** Ask nothing, even on a terminal. */
  yes: boolean;
}

export interface UploadOptions extends UploadTarget {
  spool: boolean;
}

export interface ProfilesOptions {
  json: boolean;
}

export interface LoginOptions {
  server: string;
  token: string | null;
  email: string | null;
  passwordStdin: boolean;
  tokenName: string | null;
}
