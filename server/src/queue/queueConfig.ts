/**
 * The job queue's settings, from the environment (read once by main.ts):
 * TIDEMARK_JOB_EXPIRE_SECONDS (visibility timeout: longer than the slowest file takes to scan and upload),
 * TIDEMARK_JOB_RETRY_LIMIT (failed attempts after the first before a job is dead-lettered),
 * TIDEMARK_JOB_HEARTBEAT_SECONDS (a job whose worker is silent this long goes back to the queue),
 * TIDEMARK_JOB_RETENTION_DAYS (how long a queued job may wait), and
 * TIDEMARK_QUEUE_MAINTENANCE_SECONDS (how often expired jobs are looked for).
 */
import { ConfigError } from "../config.ts";
import { DEFAULT_QUEUE_OPTIONS } from "./queueNames.ts";

export interface QueueConfig {
  expireInSeconds: number;
  retryLimit: number;
  heartbeatSeconds: number;
  retentionMinutes: number;
  maintenanceIntervalSeconds: number;
}

/** pg-boss refuses an expiry of 24 hours or more. */
const MAX_EXPIRE_SECONDS = 24 * 3600 - 1;

function wholeNumber(env: NodeJS.ProcessEnv, name: string, fallback: number, min: number, max: number): number {
  const raw = env[name];
  if (raw === undefined || raw === "") return fallback;
  const n = Number(raw);
  if (!/^\d+$/.test(raw.trim()) || n < min || n > max) throw new ConfigError(`${name} must be a whole number from ${min} to ${max}, got "${raw}"`);
  return n;
}

export function loadQueueConfig(env: NodeJS.ProcessEnv = process.env): QueueConfig {
  return {
    expireInSeconds: wholeNumber(env, "TIDEMARK_JOB_EXPIRE_SECONDS", DEFAULT_QUEUE_OPTIONS.expireInSeconds, 1, MAX_EXPIRE_SECONDS),
    retryLimit: wholeNumber(env, "TIDEMARK_JOB_RETRY_LIMIT", DEFAULT_QUEUE_OPTIONS.retryLimit, 0, 100),
    heartbeatSeconds: wholeNumber(env, "TIDEMARK_JOB_HEARTBEAT_SECONDS", DEFAULT_QUEUE_OPTIONS.heartbeatSeconds, 2, 3600),
    retentionMinutes: wholeNumber(env, "TIDEMARK_JOB_RETENTION_DAYS", DEFAULT_QUEUE_OPTIONS.retentionMinutes / 1440, 1, 3650) * 1440,
    maintenanceIntervalSeconds: wholeNumber(env, "TIDEMARK_QUEUE_MAINTENANCE_SECONDS", 30, 1, 3600),
  };
}
