/**
 * The server SIGKILLed in the middle of an ingest transaction: no half batch in the database, the
 * images it had written are orphans that the start-up sweep removes, and the CLI's retry of the same
 * upload then creates exactly one batch.
 */
import { existsSync, readdirSync, utimesSync } from "node:fs";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, expect, it } from "vitest";
import { connectDatabase, type Database } from "../../server/src/db/connect.ts";
import { migrateUp } from "../../server/src/db/migrator.ts";
import { Batch, FileResult, Finding, initModels, User } from "../../server/src/models/index.ts";
import { createApiToken } from "../../server/src/services/apiTokens.ts";
import { createTestDatabase, type TestDatabase } from "../helpers/db.ts";
import { startChildServer, type ChildServer } from "./helpers/childServer.ts";
import { finding, pngBytes, scanReport } from "./helpers/reports.ts";

const FILES = 6000;
const IMAGES = 40;

let testDb: TestDatabase;
let db: Database;
let dir: string;
let objectsDir: string;
let server: ChildServer | null = null;
let token: string;

const serverEnv = (): Record<string, string> => ({
  DATABASE_URL: testDb.url,
  DATA_DIR: dir,
  OBJECT_STORE_DIR: objectsDir,
  SESSION_SECRET: "kill-test-secret-0123456789abcdefghij",
});

function objectFiles(): string[] {
  if (!existsSync(objectsDir)) return [];
  return readdirSync(objectsDir, { recursive: true, withFileTypes: true })
    .filter((e) => e.isFile())
    .map((e) => path.join(e.parentPath, e.name));
}

function uploadForm(): FormData {
  const report = scanReport(
    Array.from({ length: FILES }, (_, i) => ({
      path: `reel-${String(Math.floor(i / 100)).padStart(3, "0")}/take-${i}.wav`,
      verdict: i % 7 === 0 ? ("fail" as const) : ("pass" as const),
      findings: [finding("hum", "warn", i), finding("dc-offset", "info", i + 1)],
    })),
  );
  const form = new FormData();
  form.append("collection", "Lighthouse Choir Reels");
  form.append("batchKey", "big-night-transfer");
  form.append("report", new Blob([JSON.stringify(report)], { type: "application/json" }), "report.json");
  for (let i = 0; i < IMAGES; i++) form.append("spectrogram", new Blob([new Uint8Array(pngBytes(64, 16))], { type: "image/png" }), `${i}.png`);
  return form;
}

const post = (url: string): Promise<Response> =>
  fetch(`${url}/api/ingest`, { method: "POST", headers: { authorization: `Bearer ${token}` }, body: uploadForm() });

/** An open transaction of the server's writing into the ingest tables. */
async function ingestTransactionOpen(): Promise<boolean> {
  const [rows] = await db.sequelize.query(
    `select 1 from pg_stat_activity
      where application_name = 'tidemark-server' and datname = current_database() and xact_start is not null
        and (query ilike 'insert into file_results%' or query ilike 'insert into findings%')`,
  );
  return rows.length > 0;
}

beforeAll(async () => {
  testDb = await createTestDatabase("kill");
  db = connectDatabase(testDb.url, { poolMax: 2 });
  await migrateUp(db.sequelize);
  initModels(db.sequelize);
  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "kill-"));
  objectsDir = path.join(dir, "objects");
  const user = await User.create({ email: "night.tech@harbourside.test", name: "Night Technician", role: "technician", passwordHash: "scrypt$unused" });
  token = (await createApiToken(user.id, "kill test")).plaintext;
});

afterAll(async () => {
  await server?.kill("SIGKILL");
  await db.close();
  await testDb.drop();
  rmSync(dir, { recursive: true, force: true });
});

it("leaves no half batch, sweeps the orphaned images at the next start, and a retry makes exactly one batch", async () => {
  server = await startChildServer(serverEnv());
  const upload = post(server.url).then(
    (r) => `answered ${r.status}`,
    (e: unknown) => `dropped: ${String((e as { cause?: { code?: string } }).cause?.code ?? e)}`,
  );
  const started = Date.now();
  while (!(await ingestTransactionOpen())) {
    if (Date.now() - started > 30_000) throw new Error(`the ingest transaction never showed up:\n${server.output()}`);
    await new Promise((r) => setTimeout(r, 5));
  }
  await server.kill("SIGKILL");
  expect(await upload).toMatch(/^dropped/);

  // PostgreSQL rolls the dead connection's transaction back once it notices the client is gone.
  const until = Date.now() + 20_000;
  while (await ingestTransactionOpen()) {
    if (Date.now() > until) throw new Error("the killed server's transaction stayed open");
    await new Promise((r) => setTimeout(r, 50));
  }
  expect(await Batch.count()).toBe(0);
  expect(await FileResult.count()).toBe(0);
  expect(await Finding.count()).toBe(0);
  const orphans = objectFiles();
  expect(orphans).toHaveLength(IMAGES);

  // Age the orphans past the sweep's one-hour cut-off, then start the server again.
  const twoHoursAgo = new Date(Date.now() - 2 * 3600_000);
  for (const file of orphans) utimesSync(file, twoHoursAgo, twoHoursAgo);
  server = await startChildServer(serverEnv());
  expect(objectFiles()).toEqual([]);
  expect(server.output()).toMatch(/orphan sweep: removed 40 unreferenced object/);

  const retried = await post(server.url);
  expect(retried.status).toBe(201);
  const again = await post(server.url);
  expect(again.status).toBe(200);
  const [first, second] = [await retried.json(), await again.json()];
  expect(second).toEqual({ ...first, created: false });
  expect(await Batch.count()).toBe(1);
  expect(await FileResult.count()).toBe(FILES);
  expect(objectFiles()).toHaveLength(IMAGES);
  await server.kill("SIGTERM");
  expect(server.process.exitCode).toBe(0);
  server = null;
});
