/**
 * The server's long-running pg-boss instance, with its own small pool: its maintenance expires jobs
 * whose worker went silent (the visibility timeout) and retries or dead-letters them; we then reconcile
 * our rows and drain the dead-letter queue. Request handlers never need it running (jobQueue.ts), so
 * main.ts starts it, and tests that want expiry start one of their own.
 */
import PgBoss from "pg-boss";
import type { Sequelize } from "sequelize";
import type { Logger } from "../logger.ts";
import { jobQueueFor, type ScanJobData } from "./jobQueue.ts";
import { initRunModels } from "./models/index.ts";
import type { QueueConfig } from "./queueConfig.ts";
import { DEAD_LETTER_QUEUE, QUEUE_SCHEMA } from "./queueNames.ts";
import { markDeadLettered, reconcileExpiredJobs } from "./reconcile.ts";

export interface QueueSupervisor {
  /** One reconcile pass now (tests; maintenance triggers it otherwise). */
  reconcile(): Promise<void>;
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
  initRunModels(sequelize);
  await jobQueueFor(sequelize).configure({ expireInSeconds: config.expireInSeconds, retryLimit: config.retryLimit, retentionMinutes: config.retentionMinutes });

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

  await boss.start();
  await boss.work<ScanJobData>(DEAD_LETTER_QUEUE, { batchSize: 50, pollingIntervalSeconds: Math.min(config.maintenanceIntervalSeconds, 10), includeMetadata: true }, async (jobs) => {
    for (const job of jobs) await markDeadLettered(sequelize, job.data, job.output);
  });

  return {
    reconcile,
    async stop() {
      await boss.stop({ graceful: true, timeout: 5_000, wait: true });
      await reconciling;
    },
  };
}
