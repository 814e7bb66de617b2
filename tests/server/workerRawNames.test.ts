/**
 * File names that are not UTF-8 through the distributed workers: `tidemark enqueue` sends each Latin-1 name
 * with its exact bytes (`pathBytes`), the server keeps two look-alike names ("café" and "cafè" in Latin-1,
 * both shown "caf\uFFFD.wav") as two jobs, and a real `tidemark worker` process opens each by its bytes and
 * stores a result with them. The files are created through Buffer paths; each stored SHA-256 is checked
 * against the file's own bytes hashed by OpenSSL (node:crypto), outside Tidemark's reader.
 */
import type { ChildProcess } from "node:child_process";
import { createHash } from "node:crypto";
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, expect, it } from "vitest";
import type { ScanRunDetailDto } from "@tidemark/shared/types/api";
import { connectDatabase, type Database } from "../../server/src/db/connect.ts";
import { migrateUp } from "../../server/src/db/migrator.ts";
import { FileResult, initModels, ScanJob, User } from "../../server/src/models/index.ts";
import { createApiToken } from "../../server/src/services/apiTokens.ts";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { createTestDatabase, type TestDatabase } from "../helpers/db.ts";
import { isolatedEnv, runCli } from "../cli/runCli.ts";
import { startChildServer, type ChildServer } from "./helpers/childServer.ts";
import { startWorkerProcess } from "./helpers/workerProcess.ts";

let testDb: TestDatabase;
let db: Database;
let dir: string;
let server: ChildServer | null = null;
let token: string;
let runId = 0;
const children: ChildProcess[] = [];

const raw = (...parts: (string | number[])[]): Buffer =>
  Buffer.concat(parts.map((p) => (typeof p === "string" ? Buffer.from(p, "utf8") : Buffer.from(p))));
/** Relative paths as bytes: "café.wav", "cafè.wav" (Latin-1), "Réels/one.wav" (Latin-1 folder), "plain.wav". */
const NAMES = [raw("caf", [0xe9], ".wav"), raw("caf", [0xe8], ".wav"), raw("R", [0xe9], "els/one.wav"), raw("plain.wav")];

beforeAll(async () => {
  testDb = await createTestDatabase("worker_raw_names");
  db = connectDatabase(testDb.url, { poolMax: 2 });
  await migrateUp(db.sequelize);
  initModels(db.sequelize);
  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "worker-names-"));
  const reels = path.join(dir, "reels");
  mkdirSync(raw(reels, "/R", [0xe9], "els"), { recursive: true });
  for (const [i, name] of NAMES.entries()) {
    const tone = encodeWav([sine({ frequencyHz: 300 + 110 * i, sampleRateHz: 48000, seconds: 1, peakDbfs: -6 })], { sampleRateHz: 48000, bitDepth: 24 });
    writeFileSync(raw(reels, "/", [...name]), tone);
  }
  const user = await User.create({ email: "night.desk@harbourside.test", name: "Night Desk", role: "technician", passwordHash: "scrypt$unused" });
  token = (await createApiToken(user.id, "raw names")).plaintext;
  server = await startChildServer({
    DATABASE_URL: testDb.url,
    DATA_DIR: dir,
    OBJECT_STORE_DIR: path.join(dir, "objects"),
    SESSION_SECRET: "worker-raw-names-secret-0123456789abcd",
  });
});

afterAll(async () => {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill("SIGKILL");
  await server?.kill("SIGTERM");
  await db.close();
  await testDb.drop();
  rmSync(dir, { recursive: true, force: true });
});

async function enqueue(): Promise<{ run: { id: number }; added: number; alreadyDone: number }> {
  const res = await runCli(["enqueue", "reels", "--server", server!.url, "--collection", "Harbourside Latin-1 reels", "--run", "names", "--json"], {
    cwd: dir,
    env: isolatedEnv({ TIDEMARK_TOKEN: token }),
  });
  expect(res.exitCode, res.stderr).toBe(0);
  return JSON.parse(res.stdout) as { run: { id: number }; added: number; alreadyDone: number };
}

it("enqueue + worker: look-alike Latin-1 names are two jobs, each measured from its own bytes and stored with them", { timeout: 120_000 }, async () => {
  const first = await enqueue();
  runId = first.run.id;
  expect(first.added).toBe(4);
  const jobs = await ScanJob.findAll({ where: { runId: first.run.id } });
  expect(jobs.map((j) => j.path).sort()).toEqual(["R\uFFFDels/one.wav", "caf\uFFFD.wav", "caf\uFFFD.wav", "plain.wav"]);
  expect(jobs.filter((j) => j.pathBytes !== null).map((j) => Buffer.from(j.pathBytes!, "base64").toString("latin1")).sort()).toEqual(["R\u00e9els/one.wav", "caf\u00e8.wav", "caf\u00e9.wav"]);

  const worker = startWorkerProcess({ serverUrl: server!.url, token, name: "latin-1", children });
  const end = Date.now() + 90_000;
  let run: ScanRunDetailDto | null = null;
  while (Date.now() < end) {
    run = (await (await fetch(`${server!.url}/api/runs/${first.run.id}`, { headers: { authorization: `Bearer ${token}` } })).json()) as ScanRunDetailDto;
    if (run.counts.done + run.counts.failed === 4) break;
    await new Promise((r) => setTimeout(r, 100));
  }
  expect(run?.counts, worker.output()).toMatchObject({ done: 4, failed: 0 });
  worker.child.kill("SIGTERM");
  expect((await worker.exit).code).toBe(0);

  const results = await FileResult.findAll({ where: { batchId: run!.batchId } });
  expect(results).toHaveLength(4);
  for (const name of NAMES) {
    const isUtf8 = name.toString("latin1") === name.toString("utf8");
    const row = results.find((r) => (r.pathBytes ? Buffer.from(r.pathBytes, "base64").equals(name) : r.path === name.toString("utf8")));
    expect(row, name.toString("latin1")).toBeDefined();
    expect(row!.path).toBe(name.toString("utf8"));
    expect(row!.pathBytes ?? null).toBe(isUtf8 ? null : name.toString("base64"));
    // The worker read this very file, not its look-alike: the SHA-256 of its bytes (OpenSSL) agrees.
    const bytes = readFileSync(raw(dir, "/reels/", [...name]));
    expect(row!.sha256).toBe(createHash("sha256").update(bytes).digest("hex"));
    expect(row!.verdict).not.toBe("error");
  }
  expect(new Set(results.map((r) => r.sha256)).size).toBe(4);

  // Enqueued again: every file, look-alikes included, is recognised by its bytes as done.
  const again = await enqueue();
  expect(again).toMatchObject({ added: 0, alreadyDone: 4 });
});

it("the server refuses pathBytes that are not the bytes of path (400, naming the field)", async () => {
  const post = (file: Record<string, unknown>) =>
    fetch(`${server!.url}/api/runs/${runId}/files`, {
      method: "POST",
      headers: { authorization: `Bearer ${token}`, "content-type": "application/json" },
      body: JSON.stringify({ files: [{ sizeBytes: 10, mtimeMs: 1, ...file }] }),
    });
  // "cafe.wav" is not how the bytes of "café.wav" in Latin-1 show.
  const wrong = await post({ path: "cafe.wav", pathBytes: raw("caf", [0xe9], ".wav").toString("base64") });
  expect(wrong.status).toBe(400);
  expect(JSON.stringify(await wrong.json())).toMatch(/pathBytes/);
  const notBase64 = await post({ path: "caf\uFFFD.wav", pathBytes: "caf\u00e9!" });
  expect(notBase64.status).toBe(400);
});
