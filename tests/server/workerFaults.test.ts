/**
 * What a `tidemark worker` process does when things go wrong, against the real server on loopback with a
 * short heartbeat limit (4 s) and a long visibility timeout (600 s), so only heartbeats can explain a
 * quick return: a SIGKILLed worker's job is measured again within the limit and stored once; a worker
 * without the storage beside a healthy one costs no retries (the healthy one measures every file); and a
 * worker stopped with --grace while the server is down exits within the grace period plus a few seconds,
 * with the exit code that says its jobs were left to the heartbeat limit.
 */
import type { ChildProcess } from "node:child_process";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, expect, it } from "vitest";
import type { ScanRunDetailDto } from "@tidemark/shared/types/api";
import { connectDatabase, type Database } from "../../server/src/db/connect.ts";
import { migrateUp } from "../../server/src/db/migrator.ts";
import { FileResult, initModels, ScanJob, ScanJobAttempt, User } from "../../server/src/models/index.ts";
import { createApiToken } from "../../server/src/services/apiTokens.ts";
import { createTestDatabase, type TestDatabase } from "../helpers/db.ts";
import { isolatedEnv, runCli } from "../cli/runCli.ts";
import { startChildServer, type ChildServer } from "./helpers/childServer.ts";
import { startWorkerProcess, type WorkerProcess } from "./helpers/workerProcess.ts";
import { writeTransferSet } from "./helpers/transferSet.ts";

const HEARTBEAT_SECONDS = 4;

let testDb: TestDatabase;
let db: Database;
let dir: string;
let server: ChildServer | null = null;
let token: string;
const children: ChildProcess[] = [];

type Worker = WorkerProcess;

function serverEnv(): Record<string, string> {
  return {
    DATABASE_URL: testDb.url,
    DATA_DIR: dir,
    OBJECT_STORE_DIR: path.join(dir, "objects"),
    SESSION_SECRET: "worker-faults-secret-0123456789abcdefgh",
    TIDEMARK_JOB_EXPIRE_SECONDS: "600",
    TIDEMARK_JOB_RETRY_LIMIT: "2",
    TIDEMARK_JOB_HEARTBEAT_SECONDS: String(HEARTBEAT_SECONDS),
    TIDEMARK_QUEUE_MAINTENANCE_SECONDS: "30",
  };
}

function startWorker(name: string, extra: string[] = []): Worker {
  return startWorkerProcess({ serverUrl: server!.url, token, name, extraArgs: extra, extraEnv: { TIDEMARK_RETRY_BASE_MS: "100" }, children });
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

async function enqueue(folder: string, run: string): Promise<number> {
  const res = await runCli(["enqueue", folder, "--server", server!.url, "--collection", "Ferry Terminal Interviews 1978", "--run", run, "--json"], {
    cwd: dir,
    env: isolatedEnv({ TIDEMARK_TOKEN: token }),
  });
  expect(res.exitCode, res.stderr).toBe(0);
  return (JSON.parse(res.stdout) as { run: { id: number } }).run.id;
}

async function runDetail(id: number): Promise<ScanRunDetailDto> {
  return (await fetch(`${server!.url}/api/runs/${id}`, { headers: { authorization: `Bearer ${token}` } })).json() as Promise<ScanRunDetailDto>;
}

const allDone = (runId: number, files: number) =>
  until(`run ${runId} done`, async () => {
    const run = await runDetail(runId);
    return run.counts.done + run.counts.failed === files && run;
  }, 60_000);

beforeAll(async () => {
  testDb = await createTestDatabase("worker_faults");
  db = connectDatabase(testDb.url, { poolMax: 2 });
  await migrateUp(db.sequelize);
  initModels(db.sequelize);
  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "worker-faults-"));
  const user = await User.create({ email: "night.desk@harbourside.test", name: "Night Desk", role: "technician", passwordHash: "scrypt$unused" });
  token = (await createApiToken(user.id, "worker faults")).plaintext;
  server = await startChildServer(serverEnv());
});

afterAll(async () => {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill("SIGKILL");
  await server?.kill("SIGTERM");
  await db.close();
  await testDb.drop();
  rmSync(dir, { recursive: true, force: true });
});

it("measures a SIGKILLed worker's job again within the heartbeat limit, and stores one result", { timeout: 90_000 }, async () => {
  // Long enough (a couple of seconds each) that the victim is caught holding one.
  const folder = path.join(dir, "killed");
  writeTransferSet(folder, 2, 40);
  const runId = await enqueue(folder, "killed worker");
  const victim = startWorker("victim");
  const held = await until("the victim to hold a job", () => ScanJobAttempt.findOne({ where: { worker: "victim", endedAt: null } }));
  victim.child.kill("SIGKILL");
  const killedAt = Date.now();
  expect((await victim.exit).signal).toBe("SIGKILL");

  const rescuer = startWorker("rescuer");
  const second = await until("the job claimed again", () => ScanJobAttempt.findOne({ where: { jobId: held.jobId, attempt: held.attempt + 1 } }), 60_000);
  const back = Date.now() - killedAt;
  // The limit plus the server's check interval and the rescuer's start-up (slow on a busy machine), far
  // below the 600 s visibility timeout.
  expect(back).toBeLessThan((HEARTBEAT_SECONDS + 12) * 1000);
  expect(second.worker).toBe("rescuer");
  const run = await allDone(runId, 2);
  expect(run.counts).toMatchObject({ done: 2, failed: 0 });
  expect(await FileResult.count({ where: { batchId: run.batchId } })).toBe(2);
  const first = await ScanJobAttempt.findOne({ where: { jobId: held.jobId, attempt: held.attempt } });
  expect(first).toMatchObject({ outcome: "expired" });
  expect(first!.message).toMatch(/^attempt 1 by victim: no heartbeat for \d+ s \(limit 4 s\)/);
  rescuer.child.kill("SIGTERM");
  expect((await rescuer.exit).code).toBe(0);
});

it("lets a healthy worker measure every file while a worker without the storage spends no retries", { timeout: 90_000 }, async () => {
  const folder = path.join(dir, "shared");
  writeTransferSet(folder, 6, 2);
  const runId = await enqueue(folder, "half mounted");
  // This worker looks for the storage where nothing is mounted.
  const blind = startWorker("blind", ["--mount", `${dir}=${path.join(dir, "not-mounted")}`]);
  await until("the blind worker to try a file", async () => blind.output().includes("not reachable from this worker"));
  const healthy = startWorker("healthy", ["--progress", "json"]);
  const run = await allDone(runId, 6);
  expect(run.counts).toMatchObject({ done: 6, failed: 0 });
  const jobs = await ScanJob.findAll({ where: { runId } });
  expect(jobs.every((j) => j.state === "done" && j.failures === 0 && j.worker === "healthy")).toBe(true);
  expect(jobs.some((j) => j.unreachableBy.includes("blind"))).toBe(true);
  expect(await ScanJobAttempt.count({ where: { worker: "blind", outcome: "unreachable" } })).toBeGreaterThan(0);
  expect(await ScanJobAttempt.count({ where: { worker: "blind", outcome: "done" } })).toBe(0);
  expect(blind.output()).toMatch(/use --mount ENQUEUED_PREFIX=LOCAL_PREFIX/);
  for (const w of [blind, healthy]) w.child.kill("SIGTERM");
  expect((await blind.exit).code).toBe(0);
  expect((await healthy.exit).code).toBe(0);
  // --progress json: JSON lines only, counting the bytes of each job in hand; the last one totals the six files.
  const events = healthy
    .output()
    .trim()
    .split("\n")
    .map((l) => JSON.parse(l) as Record<string, unknown>);
  expect(events.some((e) => e.event === "progress" && typeof e.bytesDone === "number")).toBe(true);
  expect(events.at(-1)).toMatchObject({ event: "done", filesDone: 6, files: 6 });
  expect(events.at(-1)!.bytesDone).toBe(events.at(-1)!.bytes);
});

it("exits within the grace period when stopped while the server is down, leaving its job to the heartbeat limit", { timeout: 90_000 }, async () => {
  const folder = path.join(dir, "outage");
  writeTransferSet(folder, 1, 240);
  const runId = await enqueue(folder, "server outage");
  const worker = startWorker("stranded", ["--grace", "3"]);
  const held = await until("the worker to hold the job", () => ScanJobAttempt.findOne({ where: { worker: "stranded", endedAt: null } }));
  // The claim's row is written just before its answer reaches the worker: give the answer a moment, so the
  // server does not go down between the two (240 s of audio keeps the worker busy for well over that moment).
  await new Promise((r) => setTimeout(r, 300));
  await server!.kill("SIGKILL");
  worker.child.kill("SIGTERM");
  const stoppedAt = Date.now();
  const exit = await worker.exit;
  const took = Date.now() - stoppedAt;
  expect(exit, worker.output()).toEqual({ code: 7, signal: null });
  expect(took).toBeLessThan(3_000 + 8_000);
  expect(worker.output()).toMatch(/1 left to the heartbeat limit/);
  expect(worker.output()).toMatch(/they return to the queue after its heartbeat limit/);

  // Back up: the job returns by the heartbeat limit (a restart gives workers one limit first) and is measured.
  server = await startChildServer(serverEnv());
  const rescuer = startWorker("after-outage");
  const run = await allDone(runId, 1);
  expect(run.counts).toMatchObject({ done: 1, failed: 0 });
  expect((await ScanJobAttempt.findOne({ where: { jobId: held.jobId, attempt: held.attempt } }))?.outcome).toBe("expired");
  rescuer.child.kill("SIGTERM");
  expect((await rescuer.exit).code).toBe(0);
});
