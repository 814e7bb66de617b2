/**
 * The worker's loop: `concurrency` lanes, each claiming one job at a time, measuring it and sending the
 * result (the server acknowledges the pg-boss job in the same transaction that stores it). A lane sends
 * its result in the background while it claims and measures the next file, so the network and the
 * server's work overlap the measuring instead of adding to it.
 *
 * While it holds jobs the worker reports a heartbeat every few seconds (the server says how often); a
 * worker that dies simply falls silent, and the server puts its jobs back in the queue after its
 * heartbeat limit. A file this worker cannot reach is released with that reason (no retry spent, and not
 * offered to this worker again), and the worker backs off before claiming more.
 *
 * Stopping: the first SIGTERM/SIGINT stops claiming and lets the jobs in hand finish (up to `graceMs`);
 * a second signal, or the grace running out, aborts them and releases each back to the queue at once.
 * Either way the loop ends within a few seconds: a job that cannot be handed back (server unreachable)
 * is left to the heartbeat limit and counted in `left`.
 *
 * An idle worker's claim waits on the server for up to 10 s (a long poll), so a new job is started within
 * a fraction of a second instead of after the next poll. A busy lane asks for its next job once the file
 * in hand has been read to the end (what is left is finishing the analysis and drawing the images), so
 * the claim's round trip overlaps the measuring instead of idling the engine between files; asking no
 * earlier keeps the last jobs of a run from waiting behind a busy worker while another sits idle.
 *
 * The server is given `firstContactMs` to answer at all (a wrong URL fails fast) and, once it has
 * answered, `offlineLimitMs` of silence before the worker gives up.
 */
import type { ClaimedJobDto, ClaimJobsResultDto, JobHeartbeatResultDto, JobResultDto } from "@tidemark/shared/types/api";
import { ApiError, networkHint, ServerUnreachableError, WrongServerError, type ApiClient } from "../api/apiClient.ts";
import { oneLine } from "../errors.ts";
import { WorkerCrashError, WorkerStartError } from "../scan/workerPool.ts";
import type { ScanProgress } from "../scan/progress.ts";
import { localPath, type PathMount } from "./pathMounts.ts";
import type { ScanEngines } from "./scanEngines.ts";
import { FileMissingError, resultForm, scanJob, type JobOutcome } from "./scanJob.ts";

export interface WorkerLoopOptions {
  api: ApiClient;
  engines: ScanEngines;
  worker: string;
  concurrency: number;
  pollMs: number;
  mounts: PathMount[];
  exitWhenIdle: boolean;
  graceMs: number;
  /** How long a server that never answered is tried before the worker gives up. */
  firstContactMs: number;
  /** How long a server that did answer may stay unreachable before the worker gives up. */
  offlineLimitMs: number;
  log: (line: string) => void;
  /** Progress lines per job (off with --quiet). */
  verbose: boolean;
  /** The live display (bytes within each job, ETA for the jobs in hand); absent in tests. */
  progress?: ScanProgress;
}

export interface WorkerSummary {
  done: number;
  failed: number;
  released: number;
  /** Jobs that could not be handed back (server unreachable): they return after the server's heartbeat limit. */
  left: number;
}

/** Why the loop stopped on its own: the kind says which exit code fits. */
export class WorkerStopError extends Error {
  constructor(
    readonly kind: "auth" | "refused" | "unreachable" | "start",
    message: string,
    readonly error?: unknown,
  ) {
    super(message);
    this.name = "WorkerStopError";
  }
}

export interface WorkerControl {
  /** First call: finish what is in hand; second call: abort and release it. */
  stop(): void;
  /** What was done, and why the loop stopped on its own (null: a signal, or --exit-when-idle). */
  readonly finished: Promise<{ summary: WorkerSummary; stoppedBy: WorkerStopError | null }>;
}

/** Longest wait between claims while the server is unreachable, or while files are unreachable here. */
const MAX_BACKOFF_MS = 30_000;
/** Until the server says otherwise (every claim answer does). */
const DEFAULT_HEARTBEAT_MS = 15_000;
/** Handing a job back at shutdown must not hold the exit up. */
const RELEASE_TIMEOUT_MS = 3_000;
/** After an abort, the loop is ended by force this long later whatever is still pending. */
const ABORT_DEADLINE_MS = 6_000;
const CLAIM_TIMEOUT_MS = 30_000;
/** How long a claim may wait on the server for a job (a long poll), so an idle worker starts at once. */
const CLAIM_WAIT_SECONDS = 10;
const RESULT_TIMEOUT_MS = 120_000;

interface Held {
  job: ClaimedJobDto;
  /** Set once the job is settled (stored, failed, released or left). */
  settled: boolean;
  /** The server said it took the job back (logged once). */
  lost?: boolean;
  /** Its result is on its way: a heartbeat that crosses it finds the job already done, which is no loss. */
  delivering?: boolean;
}

export function startWorkerLoop(o: WorkerLoopOptions): WorkerControl {
  const summary: WorkerSummary = { done: 0, failed: 0, released: 0, left: 0 };
  let stopping = false;
  let aborting = false;
  let fatal: WorkerStopError | null = null;
  let graceTimer: NodeJS.Timeout | null = null;
  let heartbeatMs = DEFAULT_HEARTBEAT_MS;
  let heartbeatTimer: NodeJS.Timeout | null = null;
  const started = Date.now();
  /** Last time the server answered anything; null until it first does. */
  let lastContact: number | null = null;
  const held = new Map<number, Held>();
  /** Lanes and uploads waiting; a stop wakes them. */
  const sleepers = new Set<() => void>();
  let unreachableStreak = 0;
  /** Claims waiting on the server; a stop cancels them. */
  const waitingClaims = new Set<AbortController>();
  let releaseUnreachableLogged = false;

  const contact = (): void => {
    lastContact = Date.now();
  };
  /** True once the server has been silent for longer than allowed. */
  const outOfPatience = (): boolean =>
    lastContact === null ? Date.now() - started > o.firstContactMs : Date.now() - lastContact > o.offlineLimitMs;
  const giveUpMessage = (error: unknown): string => {
    const last = error instanceof ServerUnreachableError ? `${error.last}: ${networkHint(error.last)}` : oneLine(error);
    return lastContact === null
      ? `no answer from ${o.api.server} within ${Math.round(o.firstContactMs / 1000)} s (last: ${last})`
      : `${o.api.server} unreachable for more than ${Math.round(o.offlineLimitMs / 1000)} s (last: ${last})`;
  };

  const sleep = (ms: number): Promise<void> =>
    new Promise((resolve) => {
      const timer = setTimeout(done, ms);
      function done(): void {
        clearTimeout(timer);
        sleepers.delete(done);
        resolve();
      }
      sleepers.add(done);
    });
  const wakeAll = (): void => {
    for (const wake of [...sleepers]) wake();
    for (const claim of [...waitingClaims]) claim.abort();
  };

  const stopFor = (error: WorkerStopError): void => {
    fatal ??= error;
    stopping = true;
    wakeAll();
  };
  /** A request error that means "stop the worker" (refused token, wrong server); null when it is worth waiting. */
  const fatalOf = (error: unknown, what: string): WorkerStopError | null => {
    if (error instanceof ApiError && error.status === 401) {
      return new WorkerStopError("auth", `${o.api.server} refused the API token (${error.code}); run tidemark login --server ${o.api.server} (or set TIDEMARK_TOKEN to a valid token)`, error);
    }
    if (error instanceof WrongServerError) return new WorkerStopError("unreachable", error.message, error);
    if (error instanceof ApiError && (error.status === 403 || error.status === 400)) return new WorkerStopError("refused", `the server refused to ${what}: ${error.message}`, error);
    return null;
  };

  const settle = (entry: Held, outcome: "done" | "failed" | "released" | "left"): void => {
    if (entry.settled) return;
    entry.settled = true;
    held.delete(entry.job.id);
    summary[outcome] += 1;
  };

  /** Fails (spends a retry) or releases (spends none) a job; a job that cannot be handed back is left to the heartbeat limit. */
  const handBack = async (entry: Held, action: "fail" | "release", extra: { message?: string; reason?: "stopping" | "unreachable" } = {}): Promise<void> => {
    const { job } = entry;
    try {
      const body = action === "fail" ? { attempt: job.attempt, worker: o.worker, message: extra.message } : { attempt: job.attempt, worker: o.worker, reason: extra.reason ?? "stopping", ...(extra.message ? { message: extra.message } : {}) };
      await o.api.postJson(`/api/jobs/${job.id}/${action}`, body, { retry: !aborting, timeoutMs: aborting ? RELEASE_TIMEOUT_MS : CLAIM_TIMEOUT_MS });
      contact();
      settle(entry, action === "fail" ? "failed" : "released");
    } catch (error) {
      if (error instanceof ApiError) {
        // 404/409: the job is no longer ours to change (taken back, or done); nothing is lost.
        contact();
        o.log(`job ${job.id}: could not ${action} it (${error.message})`);
        settle(entry, "released");
        return;
      }
      o.log(`job ${job.id}: could not ${action} it (${oneLine(error)}); it returns to the queue after the server's heartbeat limit`);
      settle(entry, "left");
    }
  };

  const sendHeartbeat = async (): Promise<void> => {
    const jobs = [...held.values()].filter((h) => !h.settled).map((h) => ({ id: h.job.id, attempt: h.job.attempt }));
    if (jobs.length === 0) return;
    try {
      const { body } = await o.api.postJson<JobHeartbeatResultDto>("/api/jobs/heartbeat", { worker: o.worker, jobs }, { retry: false, timeoutMs: Math.min(10_000, heartbeatMs) });
      contact();
      for (const id of body.lost) {
        const entry = held.get(id);
        if (!entry || entry.lost || entry.settled || entry.delivering) continue;
        entry.lost = true;
        o.log(`job ${id} ${entry.job.path}: the server took it back (this worker was silent too long, or a supervisor sent it back); its result is still sent if it gets there first`);
      }
    } catch (error) {
      if (o.verbose) o.log(`heartbeat not delivered (${oneLine(error)})`);
    }
  };
  const scheduleHeartbeats = (): void => {
    if (heartbeatTimer) clearInterval(heartbeatTimer);
    heartbeatTimer = setInterval(() => void sendHeartbeat(), heartbeatMs);
    heartbeatTimer.unref();
  };
  scheduleHeartbeats();

  /** Sends a result until stored, refused, aborted, or the server has been gone too long. */
  const deliver = async (entry: Held, outcome: JobOutcome, startedAt: number): Promise<void> => {
    const { job } = entry;
    let backoffMs = 1_000;
    entry.delivering = true;
    try {
      for (;;) {
        try {
          const stored = (await o.api.postForm<JobResultDto>(`/api/jobs/${job.id}/result`, () => resultForm(job, o.worker, outcome), { retry: false, timeoutMs: RESULT_TIMEOUT_MS })).body;
          contact();
          settle(entry, "done");
          if (o.verbose) {
            const seconds = (performance.now() - startedAt) / 1000;
            o.log(`${stored?.created === false ? "already stored" : "done"}: ${job.path} (${outcome.report.files[0].verdict}, ${outcome.audioSeconds.toFixed(1)} s of audio in ${seconds.toFixed(1)} s)`);
          }
          return;
        } catch (error) {
          if (error instanceof ApiError) {
            contact();
            if (error.status === 404 || error.status === 409) {
              o.log(`job ${job.id}: the server no longer wants this result (${error.message})`);
              settle(entry, "released");
              return;
            }
            const stop = fatalOf(error, "take results");
            if (stop) {
              stopFor(stop);
              settle(entry, "left");
              return;
            }
            o.log(`job ${job.id} ${job.path}: result refused (${error.message})`);
            await handBack(entry, "fail", { message: `${o.worker}: the server refused the result: ${error.message}` });
            return;
          }
          if (error instanceof WrongServerError) {
            stopFor(new WorkerStopError("unreachable", error.message, error));
            settle(entry, "left");
            return;
          }
          const last = error instanceof ServerUnreachableError ? error.message : oneLine(error);
          if (aborting || outOfPatience()) {
            o.log(`job ${job.id} ${job.path}: result not delivered (${last}); it returns to the queue after the server's heartbeat limit`);
            settle(entry, "left");
            if (!aborting) stopFor(new WorkerStopError("unreachable", giveUpMessage(error)));
            return;
          }
          o.log(`job ${job.id}: sending the result failed (${last}); trying again in ${(backoffMs / 1000).toFixed(0)} s`);
          await sleep(backoffMs);
          backoffMs = Math.min(MAX_BACKOFF_MS, backoffMs * 2);
        }
      }
    } finally {
      await outcome.cleanUp().catch(() => undefined);
    }
  };

  /**
   * Measures a claimed job; returns its upload, running in the background (boxed: an awaited promise of a
   * promise would wait for the upload too), or null when the job was handed back.
   */
  const process = async (job: ClaimedJobDto, fileRead?: () => void): Promise<{ upload: Promise<void> } | null> => {
    const entry: Held = { job, settled: false };
    held.set(job.id, entry);
    const startedAt = performance.now();
    let outcome: JobOutcome;
    try {
      const engine = o.engines.forProfile(job.profile);
      const sizes = new Map<string, number>();
      outcome = await scanJob(job, localPath(job.absPath, o.mounts), engine, {
        started: (p, size) => {
          sizes.set(p, size);
          o.progress?.grow(1, size);
          o.progress?.fileStarted(p);
        },
        read: (p, bytes) => {
          o.progress?.fileBytes(p, bytes);
          const size = sizes.get(p);
          if (size !== undefined && bytes >= size) fileRead?.();
        },
      }).finally(() => {
        const size = sizes.get(job.path);
        if (size !== undefined) o.progress?.fileDone(job.path, 0, size);
      });
    } catch (error) {
      if (aborting) {
        await handBack(entry, "release");
        return null;
      }
      if (error instanceof WorkerStartError) {
        stopFor(new WorkerStopError("start", error.message, error));
        await handBack(entry, "release");
        return null;
      }
      if (error instanceof FileMissingError) {
        // Not the file's fault: others may reach it. This worker is not offered it again and waits a little.
        unreachableStreak += 1;
        o.log(`job ${job.id} ${job.path}: ${error.message} Handed to other workers; if the storage is mounted elsewhere here, use --mount ENQUEUED_PREFIX=LOCAL_PREFIX`);
        await handBack(entry, "release", { reason: "unreachable", message: error.message });
        if (!releaseUnreachableLogged && unreachableStreak >= 3) {
          releaseUnreachableLogged = true;
          o.log(`${unreachableStreak} files in a row were not reachable from this worker: is the shared storage mounted here (or does it need --mount)?`);
        }
        await sleep(Math.min(MAX_BACKOFF_MS, 1_000 * 2 ** Math.min(unreachableStreak - 1, 5)));
        return null;
      }
      const why = error instanceof WorkerCrashError ? error.message : `measurement failed: ${oneLine(error)}`;
      o.log(`job ${job.id} ${job.path}: ${why}`);
      await handBack(entry, "fail", { message: `${o.worker}: ${why}` });
      return null;
    }
    unreachableStreak = 0;
    if (outcome.imageError) o.log(`warning: ${outcome.imageError}`);
    if (aborting) {
      await outcome.cleanUp().catch(() => undefined);
      await handBack(entry, "release");
      return null;
    }
    return { upload: deliver(entry, outcome, startedAt) };
  };

  /**
   * Asks for one more job without waiting on the server (the lane's next, claimed ahead); null when none
   * came or the request failed (the lane's own claim then asks again and handles the error). Jobs that
   * arrive are held at once, so heartbeats cover them and a stop hands them back.
   */
  const claimAhead = (): Promise<ClaimedJobDto[] | null> => {
    const cancel = new AbortController();
    waitingClaims.add(cancel);
    return o.api
      .postJson<ClaimJobsResultDto>("/api/jobs/claim", { worker: o.worker, max: 1, wait: 0 }, { retry: false, timeoutMs: CLAIM_TIMEOUT_MS, signal: cancel.signal })
      .then(({ body }) => {
        contact();
        for (const job of body.jobs) held.set(job.id, { job, settled: false });
        return body.jobs.length ? body.jobs : null;
      })
      .catch(() => null)
      .finally(() => waitingClaims.delete(cancel));
  };

  const lane = async (): Promise<void> => {
    let backoffMs = o.pollMs;
    /** This lane's result still on its way; at most one, so results never pile up unsent. */
    let sending: Promise<void> | null = null;
    /** The lane's next job, asked for while the one in hand is finished. */
    const next: { ahead: Promise<ClaimedJobDto[] | null> | null } = { ahead: null };
    try {
      while (!stopping || next.ahead) {
        let answer: ClaimJobsResultDto;
        const early = next.ahead ? await next.ahead : null;
        next.ahead = null;
        if (early) {
          await runJobs(early);
          continue;
        }
        if (stopping) break;
        const wait = o.exitWhenIdle ? 0 : CLAIM_WAIT_SECONDS;
        const asked = Date.now();
        const cancel = new AbortController();
        waitingClaims.add(cancel);
        try {
          answer = (await o.api.postJson<ClaimJobsResultDto>("/api/jobs/claim", { worker: o.worker, max: 1, wait }, { retry: false, timeoutMs: CLAIM_TIMEOUT_MS, signal: cancel.signal })).body;
          contact();
          backoffMs = o.pollMs;
        } catch (error) {
          // Cancelled by a stop: the server hands back anything it claimed for this request.
          if (cancel.signal.aborted) break;
          const stop = fatalOf(error, "hand out jobs");
          if (stop) return stopFor(stop);
          if (error instanceof ApiError) return stopFor(new WorkerStopError("refused", `the server refused to hand out jobs: ${error.message}`, error));
          const last = error instanceof ServerUnreachableError ? error.message : oneLine(error);
          if (outOfPatience()) return stopFor(new WorkerStopError("unreachable", giveUpMessage(error)));
          o.log(`claiming: ${last}; trying again in ${(backoffMs / 1000).toFixed(0)} s`);
          await sleep(backoffMs);
          backoffMs = Math.min(MAX_BACKOFF_MS, Math.max(1_000, backoffMs * 2));
          continue;
        } finally {
          waitingClaims.delete(cancel);
        }
        if (answer.heartbeatIntervalSeconds && answer.heartbeatIntervalSeconds * 1000 !== heartbeatMs) {
          heartbeatMs = Math.max(250, answer.heartbeatIntervalSeconds * 1000);
          scheduleHeartbeats();
        }
        if (answer.jobs.length === 0) {
          if (o.exitWhenIdle) break;
          // The server held the claim open for the wait: ask again at once. An answer that came back
          // sooner (a server that does not wait) is followed by the poll pause.
          if (Date.now() - asked < (wait * 1000) / 2) await sleep(o.pollMs);
          continue;
        }
        await runJobs(answer.jobs);
      }
    } finally {
      if (next.ahead) {
        // A stop cancelled it, or the lane ended early: whatever it brought goes straight back.
        const late = await next.ahead;
        for (const job of late ?? []) await handBack(held.get(job.id) ?? { job, settled: false }, "release");
      }
      if (sending) await sending;
    }

    async function runJobs(jobs: ClaimedJobDto[]): Promise<void> {
      for (const [index, job] of jobs.entries()) {
        // Claimed while a stop was asked for: hand it straight back.
        if (stopping) {
          await handBack(held.get(job.id) ?? { job, settled: false }, "release");
          continue;
        }
        const last = index === jobs.length - 1;
        const measured = await process(job, () => {
          if (last && !next.ahead && !stopping) next.ahead = claimAhead();
        });
        if (sending) await sending;
        sending = measured?.upload ?? null;
      }
    }
  };

  const lanes = Promise.all(Array.from({ length: o.concurrency }, lane));
  let forceEnd: (() => void) | null = null;
  const forced = new Promise<void>((resolve) => {
    forceEnd = resolve;
  });

  const abortNow = (): void => {
    if (aborting) return;
    aborting = true;
    stopping = true;
    wakeAll();
    void o.engines.terminate();
    // Whatever is still pending by then (a hung request) is not waited for.
    setTimeout(() => forceEnd?.(), ABORT_DEADLINE_MS).unref();
  };

  const finished = Promise.race([lanes, forced]).then(async () => {
    if (graceTimer) clearTimeout(graceTimer);
    if (heartbeatTimer) clearInterval(heartbeatTimer);
    for (const entry of [...held.values()]) {
      o.log(`job ${entry.job.id} ${entry.job.path}: not handed back in time; it returns to the queue after the server's heartbeat limit`);
      settle(entry, "left");
    }
    await Promise.race([o.engines.close().catch(() => undefined), new Promise((r) => setTimeout(r, 2_000).unref())]);
    return { summary, stoppedBy: fatal };
  });

  return {
    stop() {
      if (!stopping) {
        stopping = true;
        wakeAll();
        graceTimer = setTimeout(() => {
          o.log(`still busy after ${Math.round(o.graceMs / 1000)} s: releasing the jobs in hand`);
          abortNow();
        }, o.graceMs);
        graceTimer.unref();
        return;
      }
      abortNow();
    },
    finished,
  };
}
