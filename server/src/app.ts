/**
 * The Express app: routers mounted under /api, then the built portal, then the JSON 404 and the error
 * handler. It never listens (main.ts does), so tests drive it with supertest.
 */
import { existsSync } from "node:fs";
import path from "node:path";
import express, { Router, type Express } from "express";
import session from "express-session";
import helmet from "helmet";
import { DEFAULT_SETTINGS, type AppContext, type AppSettings, type SettingsOverrides } from "./context.ts";
import type { Database } from "./db/connect.ts";
import "./locals.ts";
import { consoleLogger, type Logger } from "./logger.ts";
import type { Mailer } from "./mail/mailer.ts";
import { authenticate } from "./middleware/auth.ts";
import { csrfProtection } from "./middleware/csrf.ts";
import { errorHandler, notFoundHandler } from "./middleware/errorHandler.ts";
import { requestId } from "./middleware/requestId.ts";
import { noStore } from "./middleware/noStore.ts";
import { SessionUserStore } from "./middleware/sessionStore.ts";
import { rejectBadText } from "./middleware/textGuard.ts";
import { initModels } from "./models/index.ts";
import { auditRouter } from "./routes/audit.ts";
import { batchesRouter } from "./routes/batches.ts";
import { collectionsRouter } from "./routes/collections.ts";
import { commentsRouter } from "./routes/comments.ts";
import { cliDownloadRouter, cliPackageRouter } from "./routes/downloads.ts";
import { duplicatesRouter } from "./routes/duplicates.ts";
import { exportsRouter } from "./routes/exports.ts";
import { filesRouter } from "./routes/files.ts";
import { fixityChecksRouter } from "./routes/fixityChecks.ts";
import { healthRouter } from "./routes/health.ts";
import { ingestRouter } from "./routes/ingest.ts";
import { jobsRouter } from "./routes/jobs.ts";
import { passwordResetRouter } from "./routes/passwordReset.ts";
import { runsRouter } from "./routes/runs.ts";
import { SESSION_COOKIE, sessionRouter } from "./routes/session.ts";
import { tokensRouter } from "./routes/tokens.ts";
import { usersRouter } from "./routes/users.ts";
import type { ObjectStore } from "./storage/ObjectStore.ts";

export interface AppDeps {
  db: Database;
  store: ObjectStore;
  mailer: Mailer;
  logger?: Logger;
  settings: Pick<AppSettings, "publicUrl" | "sessionSecret"> & SettingsOverrides;
}

function sessionMiddleware(deps: AppDeps, settings: AppSettings, logger: Logger): express.RequestHandler {
  return session({
    name: SESSION_COOKIE,
    secret: settings.sessionSecret,
    // Loads the session and its user in one query (middleware/sessionStore.ts).
    store: new SessionUserStore({
      pool: deps.db.sessionPool,
      tableName: "sessions",
      createTableIfMissing: false,
      // No write per request: a session lives sessionMaxAgeMs from sign-in.
      disableTouch: true,
      errorLog: (...args: unknown[]) => logger.warn(`session store: ${args.map(String).join(" ")}`),
    }),
    resave: false,
    saveUninitialized: false,
    rolling: false,
    cookie: {
      httpOnly: true,
      sameSite: "lax",
      // Secure whenever the request arrived over TLS, as Express sees it through "trust proxy".
      secure: "auto",
      maxAge: settings.sessionMaxAgeMs,
      path: "/",
    },
  });
}

function portal(webDistDir: string): Router {
  const router = Router();
  const index = path.join(webDistDir, "index.html");
  router.use(express.static(webDistDir, { index: false, maxAge: "1h" }));
  // Client-side routes (/files/42, /reset-password …) all get the single page.
  router.get("/{*splat}", (_req, res) => res.sendFile(index));
  return router;
}

export function createApp(deps: AppDeps): Express {
  const settings: AppSettings = { ...DEFAULT_SETTINGS, ...deps.settings, upload: { ...DEFAULT_SETTINGS.upload, ...deps.settings.upload } };
  const logger = deps.logger ?? consoleLogger;
  initModels(deps.db.sequelize);
  const ctx: AppContext = { sequelize: deps.db.sequelize, store: deps.store, mailer: deps.mailer, logger, settings };

  const app = express();
  app.disable("x-powered-by");
  app.set("trust proxy", settings.trustProxy);
  app.use(requestId);
  // Helmet's defaults, except that plain-HTTP deployments (the loopback demo) must not ask browsers to
  // upgrade every asset request to HTTPS, nor send HSTS, which only means something over TLS
  // (RFC 6797 §7.2; OWASP ASVS 4.0 V9.1.1, V14.4.5).
  const behindTls = settings.publicUrl.startsWith("https:");
  app.use(
    helmet({
      contentSecurityPolicy: { directives: { upgradeInsecureRequests: behindTls ? [] : null } },
      strictTransportSecurity: behindTls ? { maxAge: 31_536_000, includeSubDomains: true } : false,
    }),
  );

  const api = Router();
  // Health first: it must answer (503) while the database, and so the session store, is away.
  api.use(healthRouter(ctx));
  // Answers that carry secrets or personal data are never kept by a browser or proxy (ASVS 4.0 V8.2.1).
  api.use(["/session", "/tokens", "/users", "/password-reset"], noStore);
  api.use(express.json({ limit: "256kb" }));
  api.use(rejectBadText);
  api.use(sessionMiddleware(deps, settings, logger));
  api.use(authenticate);
  api.use(csrfProtection(settings.publicUrl));
  api.use(sessionRouter(ctx));
  api.use(passwordResetRouter(ctx));
  api.use(usersRouter(ctx));
  api.use(tokensRouter(ctx));
  api.use(collectionsRouter());
  api.use(batchesRouter(ctx));
  api.use(filesRouter(ctx));
  api.use(duplicatesRouter(ctx));
  api.use(commentsRouter(ctx));
  api.use(ingestRouter(ctx));
  api.use(fixityChecksRouter(ctx));
  api.use(runsRouter(ctx));
  api.use(jobsRouter(ctx));
  api.use(exportsRouter(ctx));
  api.use(auditRouter());
  api.use(cliPackageRouter(ctx));
  api.use(notFoundHandler);
  app.use("/api", api);
  app.use(cliDownloadRouter(ctx));

  if (settings.webDistDir && existsSync(path.join(settings.webDistDir, "index.html"))) app.use(portal(settings.webDistDir));
  app.use(notFoundHandler);
  app.use(errorHandler(logger));
  return app;
}
