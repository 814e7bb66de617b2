/**
 * The server's side of pg-boss for requests: send, fetch, complete, fail and release jobs inside the
 * caller's Sequelize transaction, so a job's queue state and our rows commit (or roll back) together.
 * pg-boss accepts any `db` with executeSql(text, values); these commands are single statements with
 * positional parameters, which Sequelize passes through as bind parameters. Nothing here needs
 * pg-boss's own pool or timers (the supervisor, supervisor.ts, has those).
 */
import PgBoss from "pg-boss";
import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import { DEAD_LETTER_QUEUE, DEFAULT_QUEUE_OPTIONS, QUEUE_SCHEMA, SCAN_QUEUE } from "./queueNames.ts";

/** What every scan job carries; enough to find our row again from a dead-letter copy. */
export interface ScanJobData {
  scanJobId: number;
  runId: number;
  /** The job's own id: dead-letter copies get a new id, so the original travels in the data. */
  queueJobId: string;
}

export type QueueJobState = "created" | "retry" | "active" | "completed" | "cancelled" | "failed";

export interface FetchedJob {
  queueJobId: string;
  data: ScanJobData;
  expiresAt: Date;
}

export interface JobQueue {
  insert(jobs: { queueJobId: string; data: ScanJobData }[], transaction: Transaction): Promise<void>;
  fetch(max: number, transaction: Transaction): Promise<FetchedJob[]>;
  /** Completes an active job; one that is no longer active (expired into retry) is cancelled instead. */
  finish(queueJobId: string, output: object, transaction: Transaction): Promise<void>;
  /** Fails the job for good, whatever pg-boss's own retry count, so pg-boss files its dead-letter copy. */
  deadLetter(queueJobId: string, output: object, transaction: Transaction): Promise<void>;
  /**
   * Puts an active job straight back in the queue, at its old place, without spending a pg-boss retry:
   * a re-fetch counts a retry only when `started_on` is set, so it is cleared here.
   */
  release(queueJobId: string, transaction: Transaction): Promise<boolean>;
  state(queueJobId: string, transaction?: Transaction): Promise<QueueJobState | null>;
  /** Sets the scan queue's visibility timeout, retry limit and retention for jobs sent from now on. */
  configure(options: { expireInSeconds: number; retryLimit: number; retentionMinutes: number; heartbeatSeconds?: number }): Promise<void>;
  /** What request handlers decide with: the retry limit and the heartbeat limit (defaults until configured). */
  readonly limits: { retryLimit: number; heartbeatSeconds: number };
  /**
   * Resolves after `ms`, or sooner once this process commits jobs into the queue (an insert or a release),
   * so a waiting claim starts a new job at once instead of at its next look.
   */
  waitForJobs(ms: number): Promise<void>;
}

function sequelizeDb(sequelize: Sequelize, transaction?: Transaction): PgBoss.Db {
  return {
    executeSql: async (text: string, values: unknown[] = []) => {
      // Sequelize refuses undefined bind values; pg-boss leaves unset options undefined.
      const bind = values.map((v) => (v === undefined ? null : v));
      const rows = await sequelize.query(text, { bind, type: QueryTypes.SELECT, transaction });
      return { rows };
    },
  };
}

const queues = new WeakMap<Sequelize, JobQueue>();

export function jobQueueFor(sequelize: Sequelize): JobQueue {
  const known = queues.get(sequelize);
  if (known) return known;
  const boss = new PgBoss({ db: sequelizeDb(sequelize), schema: QUEUE_SCHEMA, supervise: false, schedule: false, migrate: false });
  const db = (transaction?: Transaction) => ({ db: sequelizeDb(sequelize, transaction) });
  const affected = (result: unknown): number => Number((result as { affected?: number } | undefined)?.affected ?? 0);
  const waiting = new Set<() => void>();
  /** Wakes the waiting claims once the jobs are visible to them: after the transaction commits. */
  const jobsAdded = (transaction: Transaction): void =>
    transaction.afterCommit(() => {
      for (const wake of [...waiting]) wake();
    });

  const queue: JobQueue = {
    limits: { retryLimit: DEFAULT_QUEUE_OPTIONS.retryLimit, heartbeatSeconds: DEFAULT_QUEUE_OPTIONS.heartbeatSeconds },
    async insert(jobs, transaction) {
      if (jobs.length === 0) return;
      await boss.insert(
        jobs.map((j) => ({ id: j.queueJobId, name: SCAN_QUEUE, data: j.data })),
        db(transaction),
      );
      jobsAdded(transaction);
    },
    async fetch(max, transaction) {
      const jobs = await boss.fetch<ScanJobData>(SCAN_QUEUE, { batchSize: max, includeMetadata: true, ...db(transaction) });
      return jobs.map((j) => ({
        queueJobId: j.id,
        data: j.data,
        expiresAt: new Date(new Date(j.startedOn).getTime() + Number(j.expireInSeconds) * 1000),
      }));
    },
    async finish(queueJobId, output, transaction) {
      const completed = affected(await boss.complete(SCAN_QUEUE, queueJobId, output, db(transaction)));
      if (completed === 0) await boss.cancel(SCAN_QUEUE, queueJobId, db(transaction));
    },
    async deadLetter(queueJobId, output, transaction) {
      // Our own count decided (a release re-fetch is no retry to us); pg-boss fails a job at its limit.
      await sequelize.query(`update ${QUEUE_SCHEMA}.job set retry_count = retry_limit where name = $1 and id = $2`, {
        bind: [SCAN_QUEUE, queueJobId],
        type: QueryTypes.UPDATE,
        transaction,
      });
      await boss.fail(SCAN_QUEUE, queueJobId, output, db(transaction));
    },
    async release(queueJobId, transaction) {
      // pg-boss has no "un-fetch"; its cancel + resume would keep started_on, and the next fetch would count a retry.
      const rows = await sequelize.query(
        `update ${QUEUE_SCHEMA}.job set state = 'created', started_on = null, start_after = now()
          where name = $1 and id = $2 and state in ('active', 'retry') returning id`,
        { bind: [SCAN_QUEUE, queueJobId], type: QueryTypes.SELECT, transaction },
      );
      if (rows.length > 0) jobsAdded(transaction);
      return rows.length > 0;
    },
    async state(queueJobId, transaction) {
      const job = await boss.getJobById<ScanJobData>(SCAN_QUEUE, queueJobId, { includeArchive: true, ...db(transaction) });
      return (job?.state as QueueJobState | undefined) ?? null;
    },
    waitForJobs(ms) {
      return new Promise((resolve) => {
        const timer = setTimeout(wake, ms);
        function wake(): void {
          clearTimeout(timer);
          waiting.delete(wake);
          resolve();
        }
        waiting.add(wake);
      });
    },
    async configure({ heartbeatSeconds, ...options }) {
      await boss.updateQueue(SCAN_QUEUE, { name: SCAN_QUEUE, policy: "standard", deadLetter: DEAD_LETTER_QUEUE, retryDelay: 0, ...options });
      queue.limits.retryLimit = options.retryLimit;
      if (heartbeatSeconds !== undefined) queue.limits.heartbeatSeconds = heartbeatSeconds;
    },
  };
  queues.set(sequelize, queue);
  return queue;
}

export { DEAD_LETTER_QUEUE, SCAN_QUEUE };
