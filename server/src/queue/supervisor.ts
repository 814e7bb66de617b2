/**
 * The server's long-running pg-boss instance, with its own small pool: its maintenance expires jobs
 * whose worker went silent past the visibility timeout and retries or dead-letters them; we then reconcile
 * our rows and drain the dead-letter queue. Our own timer takes back jobs whose worker stopped sending
 * heartbeats, long before that timeout. Request handlers never need it running (jobQueue.ts), so
 * main.ts starts it, and tests that want expiry start one of their own.
 */
import PgBoss from "pg-boss";
import type { Sequelize } from "sequelize";
import type { Logger } from "../logger.ts";
import { jobQueueFor, type ScanJobData } from "./jobQueue.ts";
import { initModels } from "../models/index.ts";
import type { QueueConfig } from "./queueConfig.ts";
import { DEAD_LETTER_QUEUE, QUEUE_SCHEMA } from "./queueNames.ts";
import { markDeadLettered, reconcileExpiredJobs, requeueSilentJobs, resetHeartbeats } from "./reconcile.ts";

export interface QueueSupervisor {
  /** One reconcile pass now (tests; maintenance triggers it otherwise). */
  reconcile(): Promise<void>;
  /** One heartbeat check now (tests; a timer runs it otherwise). */
  checkHeartbeats(): Promise<void>;
  stop(): Promise<void>;
}

export interface QueueSupervisorOptions {
  connectionString: string;
  sequelize: Sequelize;
  config: QueueConfig;
  logger: Logger;
}

export async function startQueueSupervisor(options: QueueSupervisorOptions): Promise<QueueSupervisor> {
  const { sequelize, config, logger } = options;
  initModels(sequelize);
  await jobQueueFor(sequelize).configure({
    expireInSeconds: config.expireInSeconds,
    retryLimit: config.retryLimit,
    retentionMinutes: config.retentionMinutes,
    heartbeatSeconds: config.heartbeatSeconds,
  });
  await resetHeartbeats(sequelize);

  const boss = new PgBoss({
    connectionString: options.connectionString,
    schema: QUEUE_SCHEMA,
    application_name: "tidemark-queue",
    max: 3,
    // Installed by our migrations; a newer pg-boss migrates its schema here.
    migrate: true,
    supervise: true,
    schedule: false,
    maintenanceIntervalSeconds: config.maintenanceIntervalSeconds,
  });
  boss.on("error", (e) => logger.warn(`job queue: ${e.message}`));

  let reconciling: Promise<void> | null = null;
  const reconcile = (): Promise<void> => {
    // One pass at a time; a trigger during a pass joins it.
    reconciling ??= reconcileExpiredJobs(sequelize)
      .then(({ requeued, failed }) => {
        if (requeued + failed > 0) logger.info(`job queue: ${requeued} expired job(s) back in the queue, ${failed} dead-lettered`);
      })
      .catch((e: unknown) => logger.warn(`job queue reconcile: ${String(e)}`))
      .finally(() => {
        reconciling = null;
      });
    return reconciling;
  };
  boss.on("maintenance", () => void reconcile());

  // Heartbeats are ours, not pg-boss's: checked a few times per limit, so a dead worker's job is back
  // in the queue within about 1.1 limits of its last heartbeat.
  let checking: Promise<void> | null = null;
  const checkHeartbeats = (): Promise<void> => {
    checking ??= requeueSilentJobs(sequelize, config.heartbeatSeconds)
      .then(({ requeued, failed }) => {
        if (requeued + failed > 0) logger.info(`job queue: ${requeued} job(s) of silent workers back in the queue, ${failed} dead-lettered`);
      })
      .catch((e: unknown) => logger.warn(`job queue heartbeat check: ${String(e)}`))
      .finally(() => {
        checking = null;
      });
    return checking;
  };
  const heartbeatTimer = setInterval(() => void checkHeartbeats(), Math.max(500, Math.min(5_000, (config.heartbeatSeconds * 1000) / 10)));
  heartbeatTimer.unref();

  await boss.start();
  await boss.work<ScanJobData>(DEAD_LETTER_QUEUE, { batchSize: 50, pollingIntervalSeconds: Math.min(config.maintenanceIntervalSeconds, 10), includeMetadata: true }, async (jobs) => {
    for (const job of jobs) await markDeadLettered(sequelize, job.data, job.output);
  });

  return {
    reconcile,
    checkHeartbeats,
    async stop() {
      clearInterval(heartbeatTimer);
      await checking;
      await boss.stop({ graceful: true, timeout: 5_000, wait: true });
      await reconciling;
    },
  };
}
