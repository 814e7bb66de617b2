/**
 * PostgreSQL stopped and started again under a running server: /api/health says 503 meanwhile, other
 * requests get 503 in the JSON shape, nothing crashes, and the server recovers by itself.
 */
import type { AddressInfo } from "node:net";
import type { Server } from "node:http";
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, expect, it } from "vitest";
import { CSRF_HEADER } from "@tidemark/shared/types/api";
import { createApp } from "../../server/src/app.ts";
import { connectDatabase, type Database } from "../../server/src/db/connect.ts";
import { migrateUp } from "../../server/src/db/migrator.ts";
import { createMailer } from "../../server/src/mail/mailer.ts";
import { User } from "../../server/src/models/index.ts";
import { hashPassword } from "../../server/src/services/passwords.ts";
import { createFsStore } from "../../server/src/storage/fsStore.ts";
import { startDedicatedCluster, type DedicatedCluster } from "./helpers/cluster.ts";
import { collectingLogger, TEST_PASSWORD, TEST_SCRYPT_COST } from "./helpers/testApp.ts";
import path from "node:path";

let pg: DedicatedCluster;
let db: Database;
let server: Server;
let base: string;
const logger = collectingLogger();
const idleErrors: string[] = [];

beforeAll(async () => {
  pg = await startDedicatedCluster("pgrestart");
  await pg.cluster.createDatabase("tidemark");
  db = connectDatabase(pg.cluster.url("tidemark"), { poolMax: 4, onIdleError: (e) => idleErrors.push(e.message) });
  await migrateUp(db.sequelize);
  const app = createApp({
    db,
    store: createFsStore(path.join(pg.dir, "objects")),
    mailer: createMailer({ smtpUrl: null, from: "t@harbourside.test", mailDir: path.join(pg.dir, "mail"), logger }),
    logger,
    settings: { publicUrl: "http://portal.test", sessionSecret: "restart-test-secret-0123456789abcdef", passwordCost: TEST_SCRYPT_COST },
  });
  server = await new Promise((resolve) => {
    const s = app.listen(0, "127.0.0.1", () => resolve(s));
  });
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});

afterAll(async () => {
  await new Promise((r) => server.close(r));
  await db.close();
  await pg.dispose();
});

it("runs the server's queries without JIT compilation (a short list page must not pay ~0.3 s to compile)", async () => {
  const row = await db.sequelize.query("show jit", { type: QueryTypes.SELECT, plain: true });
  expect(row).toEqual({ jit: "off" });
});

async function health(): Promise<number> {
  return (await fetch(`${base}/api/health`)).status;
}

async function until(check: () => Promise<boolean>, timeoutMs: number, what: string): Promise<number> {
  const started = Date.now();
  for (;;) {
    if (await check()) return Date.now() - started;
    if (Date.now() - started > timeoutMs) throw new Error(`${what} not reached within ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

it("reports 503 while PostgreSQL is down and recovers on its own when it is back", async () => {
  await User.create({ email: "keeper@harbourside.test", name: "Lamp Keeper", role: "supervisor", passwordHash: await hashPassword(TEST_PASSWORD, TEST_SCRYPT_COST) });
  const login = await fetch(`${base}/api/session`, {
    method: "POST",
    headers: { "content-type": "application/json", [CSRF_HEADER]: "1" },
    body: JSON.stringify({ email: "keeper@harbourside.test", password: TEST_PASSWORD }),
  });
  expect(login.status).toBe(200);
  const cookie = login.headers.getSetCookie()[0].split(";")[0];
  expect(await health()).toBe(200);
  expect((await fetch(`${base}/api/files`, { headers: { cookie } })).status).toBe(200);

  await pg.cluster.stop();
  const downAfterMs = await until(async () => (await health()) === 503, 10_000, "health 503");
  const body = await (await fetch(`${base}/api/health`)).json();
  expect(body).toEqual({ ok: false, db: "down" });
  const files = await fetch(`${base}/api/files`, { headers: { cookie } });
  expect(files.status).toBe(503);
  expect((await files.json()).error.code).toBe("database_unavailable");
  const anonymous = await fetch(`${base}/api/batches`);
  expect([401, 503]).toContain(anonymous.status);

  await pg.restart();
  const recoveredAfterMs = await until(async () => (await health()) === 200, 20_000, "health 200 after restart");
  // The session row survived in the database; the pools replaced their dead connections themselves.
  const after = await fetch(`${base}/api/files`, { headers: { cookie } });
  expect(after.status).toBe(200);
  expect(logger.errors.filter((e) => !/database|ECONNREFUSED|terminat|connect/i.test(e))).toEqual([]);
  console.info(`health went 503 after ${downAfterMs} ms, back to 200 ${recoveredAfterMs} ms after the restart`);
});
