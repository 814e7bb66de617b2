/**
 * Work a request starts but does not wait for, so the answer's timing says nothing about it (a
 * password-reset request for a real account writes rows; one for an unknown address writes none).
 * Failures are logged; shutdown and tests wait for what is still running.
 */
import type { Logger } from "../logger.ts";

const pending = new Set<Promise<void>>();

export function runInBackground(what: string, logger: Logger, work: () => Promise<void>): void {
  const job: Promise<void> = work()
    .catch((e: unknown) => logger.error(`${what} failed: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`))
    .finally(() => pending.delete(job));
  pending.add(job);
}

/** Resolves when nothing started by runInBackground is still running. */
export async function backgroundIdle(): Promise<void> {
  while (pending.size > 0) await Promise.allSettled([...pending]);
}
