/**
 * The job queue's fixed names. pg-boss lives in its own schema of the server's database; one queue holds
 * every run's file jobs (claims take the oldest first), and jobs whose retries are spent land in the
 * dead-letter queue.
 */
export const QUEUE_SCHEMA = "pgboss";
export const SCAN_QUEUE = "tidemark-scan";
export const DEAD_LETTER_QUEUE = "tidemark-scan-dead";

/** Queue defaults until the server's configuration (queueConfig.ts) updates them at start-up. */
export const DEFAULT_QUEUE_OPTIONS = {
  /** Visibility timeout: an active job with no result after this long goes back to the queue. */
  expireInSeconds: 15 * 60,
  /** Failed attempts after the first before a job is dead-lettered (also: distinct workers that cannot reach it, minus one). */
  retryLimit: 3,
  /** An active job whose worker sent no heartbeat for this long goes back to the queue. */
  heartbeatSeconds: 60,
  /** A queued job nobody starts within this is dropped by pg-boss: keep it far above any backlog. */
  retentionMinutes: 365 * 24 * 60,
} as const;
