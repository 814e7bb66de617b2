/**
 * A real app on its own fresh database (migrated), a filesystem object store and mail folder in a temp
 * dir, and helpers to make users, sign in and mint tokens. No part of PostgreSQL is mocked.
 */
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import type { Express } from "express";
import request from "supertest";
import type TestAgent from "supertest/lib/agent.js";
import type { Role } from "@tidemark/shared/types/api";
import { CSRF_HEADER } from "@tidemark/shared/types/api";
import { createApp } from "../../../server/src/app.ts";
import type { SettingsOverrides } from "../../../server/src/context.ts";
import { connectDatabase, type Database } from "../../../server/src/db/connect.ts";
import { migrateUp } from "../../../server/src/db/migrator.ts";
import type { Logger } from "../../../server/src/logger.ts";
import { createMailer, type Mailer } from "../../../server/src/mail/mailer.ts";
import { User } from "../../../server/src/models/index.ts";
import { createApiToken } from "../../../server/src/services/apiTokens.ts";
import { backgroundIdle } from "../../../server/src/services/background.ts";
import { hashPassword, type ScryptCost } from "../../../server/src/services/passwords.ts";
import { createFsStore } from "../../../server/src/storage/fsStore.ts";
import type { ObjectStore } from "../../../server/src/storage/ObjectStore.ts";
import { createTestDatabase, type TestDatabase } from "../../helpers/db.ts";

/** Cheap scrypt for tests only; the stored hash names its cost, so verification is the real code path. */
export const TEST_SCRYPT_COST: ScryptCost = { N: 1024, r: 8, p: 1 };
export const TEST_PASSWORD = "correct-horse-battery";
export const PUBLIC_URL = "http://portal.test";

export interface CollectingLogger extends Logger {
  errors: string[];
}

export function collectingLogger(): CollectingLogger {
  const errors: string[] = [];
  return { errors, info: () => undefined, warn: () => undefined, error: (line) => errors.push(line) };
}

export interface TestApp {
  app: Express;
  db: Database;
  testDb: TestDatabase;
  store: ObjectStore;
  mailer: Mailer;
  logger: CollectingLogger;
  dir: string;
  objectsDir: string;
  settings: SettingsOverrides;
  /**
   * Another app over the same database, store and mailer with other settings. Sequelize models are bound
   * to one connection per process, so a test file uses one database and varies the app instead.
   */
  makeApp(settings: SettingsOverrides): Express;
  createUser(role: Role, overrides?: { email?: string; password?: string; disabled?: boolean; name?: string }): Promise<User>;
  /** A supertest agent holding the session cookie of a freshly made user of that role. */
  signIn(role: Role): Promise<{ agent: TestAgent; user: User }>;
  signInAs(email: string, password?: string): Promise<TestAgent>;
  tokenFor(user: User): Promise<string>;
  close(): Promise<void>;
}

export interface TestAppOptions {
  label?: string;
  settings?: SettingsOverrides;
  store?: (objectsDir: string) => ObjectStore;
  smtpUrl?: string | null;
}

let seq = 0;

export async function startTestApp(options: TestAppOptions = {}): Promise<TestApp> {
  const testDb = await createTestDatabase(options.label ?? "srv");
  const db = connectDatabase(testDb.url, { poolMax: 6 });
  await migrateUp(db.sequelize);
  const dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "server-"));
  const objectsDir = path.join(dir, "objects");
  const store = options.store ? options.store(objectsDir) : createFsStore(objectsDir);
  const logger = collectingLogger();
  const mailer = createMailer({ smtpUrl: options.smtpUrl ?? null, from: "Tidemark <tidemark@harbourside.test>", mailDir: path.join(dir, "mail"), logger });
  const settings: SettingsOverrides = {
    passwordCost: TEST_SCRYPT_COST,
    uploadTmpDir: path.join(dir, "uploads"),
    ...options.settings,
  };
  const makeApp = (extra: SettingsOverrides): Express =>
    createApp({
      db,
      store,
      mailer,
      logger,
      settings: { publicUrl: PUBLIC_URL, sessionSecret: "test-session-secret-that-is-long-enough-0123", ...settings, ...extra },
    });
  const app = makeApp({});

  const createUser: TestApp["createUser"] = async (role, overrides = {}) =>
    User.create({
      email: overrides.email ?? `${role}-${++seq}-${Date.now()}@harbourside.test`,
      name: overrides.name ?? `Test ${role} ${seq}`,
      role,
      disabled: overrides.disabled ?? false,
      passwordHash: await hashPassword(overrides.password ?? TEST_PASSWORD, TEST_SCRYPT_COST),
    });

  const signInAs: TestApp["signInAs"] = async (email, password = TEST_PASSWORD) => {
    const agent = request.agent(app);
    const res = await agent.post("/api/session").set(CSRF_HEADER, "1").send({ email, password });
    if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${JSON.stringify(res.body)}`);
    return agent;
  };

  return {
    app,
    db,
    testDb,
    store,
    mailer,
    logger,
    dir,
    objectsDir,
    settings,
    makeApp,
    createUser,
    signInAs,
    async signIn(role) {
      const user = await createUser(role);
      return { agent: await signInAs(user.email), user };
    },
    async tokenFor(user) {
      return (await createApiToken(user.id, "test token")).plaintext;
    },
    async close() {
      await backgroundIdle();
      await mailer.idle();
      mailer.close();
      await db.close();
      await testDb.drop();
      rmSync(dir, { recursive: true, force: true });
    },
  };
}
