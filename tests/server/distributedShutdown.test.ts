/**
 * How a `tidemark worker` process stops and what it does with its job: one SIGTERM lets the job in hand
 * finish and be stored, a second releases it to the queue at once; a file missing from the worker's
 * storage is handed to other workers (no retry spent) and dead-lettered only when two workers cannot reach it; `--mount` reads the storage from another mount
 * point; `--exit-when-idle` ends the process once the queue is empty.
 */
import type { ChildProcess } from "node:child_process";
import { mkdtempSync, renameSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, expect, it } from "vitest";
import type { ScanRunDetailDto } from "@tidemark/shared/types/api";
import { connectDatabase, type Database } from "../../server/src/db/connect.ts";
import { migrateUp } from "../../server/src/db/migrator.ts";
import { initModels, ScanJob, ScanJobAttempt, User } from "../../server/src/models/index.ts";
import { createApiToken } from "../../server/src/services/apiTokens.ts";
import { createTestDatabase, type TestDatabase } from "../helpers/db.ts";
import { isolatedEnv, runCli } from "../cli/runCli.ts";
import { startChildServer, type ChildServer } from "./helpers/childServer.ts";
import { startWorkerProcess, type WorkerProcess } from "./helpers/workerProcess.ts";
import { writeTransferSet } from "./helpers/transferSet.ts";

let testDb: TestDatabase;
let db: Database;
let dir: string;
let server: ChildServer | null = null;
let token: string;
const children: ChildProcess[] = [];

type Worker = WorkerProcess;

function startWorker(name: string, extra: string[] = []): Worker {
  return startWorkerProcess({ serverUrl: server!.url, token, name, extraArgs: extra, children });
}

async function until<T>(what: string, probe: () => Promise<T | null | undefined | false>, timeoutMs = 30_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe();
    if (value) return value;
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}\n${server?.output().slice(-2000)}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

const heldBy = (worker: string) => until(`${worker} to hold a job`, () => ScanJobAttempt.findOne({ where: { worker, endedAt: null } }));

async function enqueue(folder: string, run: string): Promise<number> {
  const res = await runCli(["enqueue", folder, "--server", server!.url, "--collection", "Lighthouse Choir Reels", "--run", run, "--json"], { cwd: dir, env: isolatedEnv({ TIDEMARK_TOKEN: token }) });
  expect(res.exitCode, res.stderr).toBe(0);
  return (JSON.parse(res.stdout) as { run: { id: number } }).run.id;
}

async function runDetail(id: number): Promise<ScanRunDetailDto> {
  return (await fetch(`${server!.url}/api/runs/${id}`, { headers: { authorization: `Bearer ${token}` } })).json() as Promise<ScanRunDetailDto>;
}

beforeAll(async () => {
  testDb = await createTestDatabase("shutdown");
  db = connectDatabase(testDb.url, { poolMax: 2 });
  await migrateUp(db.sequelize);
  initModels(db.sequelize);
  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "shutdown-"));
  // Long enough (about two seconds of measuring) that a signal finds the job in hand.
  writeTransferSet(path.join(dir, "share", "choir"), 2, 50);
  const user = await User.create({ email: "reel.room@harbourside.test", name: "Reel Room", role: "technician", passwordHash: "scrypt$unused" });
  token = (await createApiToken(user.id, "shutdown test")).plaintext;
  server = await startChildServer({
    DATABASE_URL: testDb.url,
    DATA_DIR: dir,
    OBJECT_STORE_DIR: path.join(dir, "objects"),
    SESSION_SECRET: "shutdown-test-secret-0123456789abcdefgh",
    // Long: a released job must come back at once, not by expiring.
    TIDEMARK_JOB_EXPIRE_SECONDS: "600",
    TIDEMARK_JOB_RETRY_LIMIT: "1",
    TIDEMARK_QUEUE_MAINTENANCE_SECONDS: "1",
  });
});

afterAll(async () => {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill("SIGKILL");
  await server?.kill("SIGTERM");
  await db.close();
  await testDb.drop();
  rmSync(dir, { recursive: true, force: true });
});

it("finishes the job in hand on SIGTERM, releases it on a second SIGTERM, and exits 0 both times", { timeout: 90_000 }, async () => {
  const runId = await enqueue(path.join(dir, "share", "choir"), "evening session");

  const first = startWorker("finisher");
  const held = await heldBy("finisher");
  first.child.kill("SIGTERM");
  expect(await first.exit, first.output()).toEqual({ code: 0, signal: null });
  expect(first.output()).toMatch(/SIGTERM: no new jobs; finishing the ones in hand/);
  expect(first.output()).toMatch(/worker finisher stopped: 1 done, 0 failed, 0 released/);
  expect(await ScanJob.findByPk(held.jobId)).toMatchObject({ state: "done", worker: "finisher" });
  // It took no second job after the signal.
  expect(await ScanJob.count({ where: { runId, state: "queued", attempts: 0 } })).toBe(1);

  const second = startWorker("releaser");
  const holding = await heldBy("releaser");
  second.child.kill("SIGTERM");
  await new Promise((r) => setTimeout(r, 200));
  second.child.kill("SIGTERM");
  const quickly = Date.now();
  expect(await second.exit, second.output()).toEqual({ code: 0, signal: null });
  expect(Date.now() - quickly).toBeLessThan(10_000);
  expect(second.output()).toMatch(/0 done, 0 failed, 1 released/);
  expect(await ScanJob.findByPk(holding.jobId)).toMatchObject({ state: "queued", attempts: 1 });
  expect((await ScanJobAttempt.findOne({ where: { jobId: holding.jobId, attempt: 1 } }))?.outcome).toBe("released");

  // The storage moves to another mount point; --mount maps the enqueued paths, --exit-when-idle ends the
  // run, and --concurrency 2 measures on worker threads instead of the main thread.
  renameSync(path.join(dir, "share"), path.join(dir, "mounted-elsewhere"));
  const third = startWorker("mapper", ["--mount", `${path.join(dir, "share")}=${path.join(dir, "mounted-elsewhere")}`, "--exit-when-idle", "--concurrency", "2"]);
  expect(await third.exit, third.output()).toEqual({ code: 0, signal: null });
  expect(await ScanJob.findByPk(holding.jobId)).toMatchObject({ state: "done", worker: "mapper", attempts: 2 });
  expect((await runDetail(runId)).counts).toMatchObject({ done: 2, queued: 0, active: 0, failed: 0 });
});

it("hands a file this worker cannot reach to other workers without spending a retry, and dead-letters it once two workers cannot reach it", { timeout: 60_000 }, async () => {
  const folder = path.join(dir, "mounted-elsewhere", "choir");
  const runId = await enqueue(folder, "vanishing reels");
  renameSync(path.join(dir, "mounted-elsewhere"), path.join(dir, "unmounted"));
  // Not offered the same files again, the worker finds the queue empty for it and exits.
  const worker = startWorker("no-storage", ["--exit-when-idle"]);
  expect(await worker.exit, worker.output()).toEqual({ code: 0, signal: null });
  expect(worker.output()).toMatch(/is not reachable from this worker \(ENOENT\): is the shared storage mounted here\?/);
  expect(worker.output()).toMatch(/Handed to other workers; if the storage is mounted elsewhere here, use --mount/);
  expect(worker.output()).toMatch(/0 done, 0 failed, 2 released/);
  const waiting = await runDetail(runId);
  expect(waiting).toMatchObject({ state: "running", counts: { queued: 2, failed: 0, done: 0 } });
  for (const job of waiting.returnedJobs) expect(job.lastError).toMatch(/^no-storage could not reach the file: .*not reachable from this worker/);
  expect(await ScanJob.count({ where: { runId, failures: 0 } })).toBe(2);

  // A second worker without the storage: two distinct workers (the retry limit is 1) dead-letter the files.
  const second = startWorker("no-storage-2", ["--exit-when-idle"]);
  expect(await second.exit, second.output()).toEqual({ code: 0, signal: null });
  const run = await runDetail(runId);
  expect(run).toMatchObject({ state: "failed", counts: { failed: 2, done: 0 } });
  expect(run.failedJobs).toHaveLength(2);
  for (const job of run.failedJobs) {
    expect(job.attempts).toBe(2);
    expect(job.lastError).toBe("2 workers could not reach the file (no-storage, no-storage-2); is the storage mounted on them (tidemark worker --mount)?");
  }
});
