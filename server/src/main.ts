/**
 * `node --import tsx server/src/main.ts`: reads the environment once, migrates, sweeps what a crash left,
 * listens, seeds the demo on an empty database (unless DEMO_SEED=0 or NODE_ENV=production), and shuts
 * down cleanly on SIGTERM/SIGINT.
 */
import type { Server } from "node:http";
import { createApp } from "./app.ts";
import { ConfigError, loadConfig } from "./config.ts";
import { connectDatabase, type Database } from "./db/connect.ts";
import { migrateUp } from "./db/migrator.ts";
import { consoleLogger as log } from "./logger.ts";
import { createMailer } from "./mail/mailer.ts";
import { DEFAULT_SETTINGS } from "./context.ts";
import { initModels } from "./models/index.ts";
import { loadQueueConfig } from "./queue/queueConfig.ts";
import { startQueueSupervisor } from "./queue/supervisor.ts";
import { seedDemo } from "./seed/seedDemo.ts";
import { backgroundIdle } from "./services/background.ts";
import { sweepOrphanObjects, sweepStaleUploads } from "./services/orphanSweep.ts";
import { createObjectStore } from "./storage/index.ts";

const SHUTDOWN_GRACE_MS = 10_000;

/** At boot the database may still be starting (npm start brings both up): retry for a while. */
async function migrateWhenReachable(db: Database, attempts = 40): Promise<void> {
  for (let i = 1; ; i++) {
    try {
      await db.sequelize.authenticate();
      break;
    } catch (e) {
      if (i >= attempts) throw e;
      if (i === 1) log.warn(`database not reachable yet (${String(e)}); retrying`);
      await new Promise((r) => setTimeout(r, 500));
    }
  }
  const applied = await migrateUp(db.sequelize);
  if (applied.length) log.info(`applied migrations: ${applied.join(", ")}`);
}

async function main(): Promise<void> {
  const config = loadConfig();
  const queueConfig = loadQueueConfig();
  const db = connectDatabase(config.databaseUrl, { onIdleError: (e) => log.warn(`idle database connection lost: ${e.message}`) });
  await migrateWhenReachable(db);
  initModels(db.sequelize);
  const store = createObjectStore(config.objectStore);
  const uploadTmpDir = DEFAULT_SETTINGS.uploadTmpDir;
  await sweepOrphanObjects({ sequelize: db.sequelize, store, logger: log }).catch((e: unknown) => log.warn(`orphan sweep failed: ${String(e)}`));
  await sweepStaleUploads(uploadTmpDir);

  // pg-boss's maintenance: expired jobs back in the queue (or dead-lettered), our rows reconciled.
  const queue = await startQueueSupervisor({ connectionString: config.databaseUrl, sequelize: db.sequelize, config: queueConfig, logger: log });
  const mailer = createMailer({ smtpUrl: config.smtpUrl, from: config.mailFrom, mailDir: config.mailDir, logger: log });
  const app = createApp({
    db,
    store,
    mailer,
    logger: log,
    settings: {
      publicUrl: config.publicUrl,
      sessionSecret: config.sessionSecret,
      trustProxy: config.trustProxy,
      webDistDir: config.webDistDir,
      cliPackageDir: config.cliPackageDir,
      uploadTmpDir,
      upload: config.upload,
    },
  });

  const server: Server = await new Promise((resolve, reject) => {
    const s = app.listen(config.port, config.host, (err?: Error) => (err ? reject(err) : resolve(s)));
  });
  const address = server.address();
  const port = typeof address === "object" && address ? address.port : config.port;
  const localUrl = `http://${config.host === "0.0.0.0" || config.host === "::" ? "127.0.0.1" : config.host}:${port}`;
  log.info(`listening on ${localUrl} (public URL ${config.publicUrl}, objects: ${config.objectStore.kind}, mail: ${config.smtpUrl ?? config.mailDir})`);

  let stopping = false;
  const shutdown = async (signal: string): Promise<void> => {
    if (stopping) return;
    stopping = true;
    log.info(`${signal}: finishing open requests, then stopping`);
    const force = setTimeout(() => server.closeAllConnections(), SHUTDOWN_GRACE_MS);
    force.unref();
    await new Promise<void>((resolve) => server.close(() => resolve()));
    server.closeIdleConnections();
    await queue.stop().catch((e: unknown) => log.warn(`stopping the job queue: ${String(e)}`));
    await backgroundIdle();
    await mailer.idle();
    mailer.close();
    await db.close();
    log.info("stopped");
    process.exit(0);
  };
  process.on("SIGTERM", () => void shutdown("SIGTERM"));
  process.on("SIGINT", () => void shutdown("SIGINT"));

  if (config.demoSeed) {
    const outcome = await seedDemo({ baseUrl: localUrl, password: config.demoPassword, log: (line) => log.info(`seed: ${line}`) });
    if (outcome.seeded) {
      log.info(`demo seeded: sign in at ${config.publicUrl} as admin@, supervisor@, technician@ or auditor@harbourside.test with password "${config.demoPassword}"`);
    }
  }
}

process.on("unhandledRejection", (e) => log.error(`unhandled rejection: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`));

main().catch((e: unknown) => {
  log.error(e instanceof ConfigError ? `configuration: ${e.message}` : `start-up failed: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
  process.exit(1);
});
