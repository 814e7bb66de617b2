/**
 * The real thing for browser tests: a fresh database in the throwaway cluster, migrations, the Express
 * app serving the built portal on a free loopback port, and the demo seed (which runs the CLI on the
 * synthesised Harbourside archive and uploads through /api/ingest).
 */
import { randomBytes } from "node:crypto";
import { cpSync, existsSync, mkdtempSync, rmSync } from "node:fs";
import { createServer, type Server } from "node:http";
import { tmpdir } from "node:os";
import path from "node:path";
import { createApp } from "../../server/src/app.ts";
import { connectDatabase } from "../../server/src/db/connect.ts";
import { migrateUp } from "../../server/src/db/migrator.ts";
import { silentLogger, type Logger } from "../../server/src/logger.ts";
import { createMailer } from "../../server/src/mail/mailer.ts";
import { projectRoot } from "../../server/src/paths.ts";
import { seedDemo } from "../../server/src/seed/seedDemo.ts";
import { backgroundIdle } from "../../server/src/services/background.ts";
import { createFsStore } from "../../server/src/storage/fsStore.ts";
import { createTestDatabase } from "../helpers/db.ts";

export const DEMO_PASSWORD = "harbourside-demo";
/** Cheap hashing: the tests sign in a dozen times and check behaviour, not the cost factor. */
const TEST_SCRYPT_COST = { N: 2 ** 10, r: 8, p: 1 };

export interface PortalStack {
  baseUrl: string;
  /** Without SMTP the mailer writes each message here as an .eml file. */
  mailDir: string;
  mailer: { idle(): Promise<void> };
  stop(): Promise<void>;
}

function listen(server: Server): Promise<number> {
  return new Promise((resolve, reject) => {
    server.once("error", reject);
    server.listen(0, "127.0.0.1", () => {
      const address = server.address();
      if (typeof address === "object" && address) resolve(address.port);
      else reject(new Error("the test server has no port"));
    });
  });
}

export async function startPortalStack(log: (line: string) => void = () => undefined): Promise<PortalStack> {
  const work = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "e2e-portal-"));
  // A private copy of the built portal: another run's `vite build` empties web/dist while it works.
  const builtPortal = path.join(projectRoot, "web", "dist");
  if (!existsSync(path.join(builtPortal, "index.html"))) {
    throw new Error("web/dist has no index.html: build the portal first (npm test does: npm run build -w web)");
  }
  const webDistDir = path.join(work, "web-dist");
  cpSync(builtPortal, webDistDir, { recursive: true });
  const database = await createTestDatabase("e2e_portal");
  const db = connectDatabase(database.url);
  await migrateUp(db.sequelize);
  const logger: Logger = { ...silentLogger, error: (line) => log(`server error: ${line}`) };
  const mailDir = path.join(work, "mail");
  const mailer = createMailer({ smtpUrl: null, from: "tidemark@harbourside.test", mailDir, logger });

  // The port must be known before the app is built: the public URL goes into e-mailed links.
  const server = createServer();
  const port = await listen(server);
  const baseUrl = `http://127.0.0.1:${port}`;
  const app = createApp({
    db,
    store: createFsStore(path.join(work, "objects")),
    mailer,
    logger,
    settings: {
      publicUrl: baseUrl,
      sessionSecret: randomBytes(24).toString("hex"),
      webDistDir,
      passwordCost: TEST_SCRYPT_COST,
      uploadTmpDir: path.join(work, "uploads"),
      loginRateLimit: { windowMs: 60_000, limit: 1_000 },
    },
  });
  server.on("request", app);
  await seedDemo({ baseUrl, password: DEMO_PASSWORD, passwordCost: TEST_SCRYPT_COST, log });

  return {
    baseUrl,
    mailDir,
    mailer,
    async stop() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await backgroundIdle();
      await mailer.idle();
      mailer.close();
      await db.close();
      await database.drop();
      rmSync(work, { recursive: true, force: true });
    },
  };
}
