/**
 * Distributed scanning end to end: the real server (pg-boss on a fresh database) on a loopback port, three
 * `tidemark worker` processes that know only its URL and a token, 40 synthesised files enqueued with
 * `tidemark enqueue`, and one worker SIGKILLed while it holds a job. Every file must end with exactly one
 * result, the killed worker's job must have been retried by another worker, and the results must equal a
 * single `tidemark scan` of the same folder.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, expect, it } from "vitest";
import type { ScanRunDetailDto } from "@tidemark/shared/types/api";
import type { FileReport, ScanReport } from "@tidemark/shared/types/report";
import { connectDatabase, type Database } from "../../server/src/db/connect.ts";
import { migrateUp } from "../../server/src/db/migrator.ts";
import { FileResult, initModels, ScanJob, ScanJobAttempt, User } from "../../server/src/models/index.ts";
import { createApiToken } from "../../server/src/services/apiTokens.ts";
import { createTestDatabase, type TestDatabase } from "../helpers/db.ts";
import { binPath, isolatedEnv, runCli } from "../cli/runCli.ts";
import { startChildServer, type ChildServer } from "./helpers/childServer.ts";
import { writeTransferSet } from "./helpers/transferSet.ts";

const FILES = 40;
const SECONDS = 6;
/**
 * Far above the heartbeat interval (a quarter of it), short enough that the killed worker's job returns
 * soon; the visibility timeout stays long, so a job slowed by a busy machine is never taken back by it.
 */
const HEARTBEAT_SECONDS = 5;

let testDb: TestDatabase;
let db: Database;
let dir: string;
let archive: string;
let server: ChildServer | null = null;
let techToken: string;
let supervisorToken: string;
const workers = new Map<string, { child: ChildProcess; output: () => string; exit: Promise<{ code: number | null; signal: NodeJS.Signals | null }> }>();

/** Workers get the server URL and a token, and no database address at all. */
function workerEnv(): NodeJS.ProcessEnv {
  const env: NodeJS.ProcessEnv = { ...process.env, ...isolatedEnv({ TIDEMARK_TOKEN: techToken }) };
  for (const key of ["DATABASE_URL", "TIDEMARK_TEST_PG_URL", "PGHOST", "PGPORT", "PGDATABASE"]) delete env[key];
  return env;
}

function startWorker(name: string): void {
  const child = spawn(process.execPath, [binPath, "worker", "--server", server!.url, "--name", name, "--poll", "0.3"], {
    env: workerEnv(),
    stdio: ["ignore", "pipe", "pipe"],
  });
  let output = "";
  child.stdout!.on("data", (c: Buffer) => void (output += c.toString()));
  child.stderr!.on("data", (c: Buffer) => void (output += c.toString()));
  const exit = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => child.once("exit", (code, signal) => resolve({ code, signal })));
  workers.set(name, { child, output: () => output, exit });
}

async function until<T>(what: string, probe: () => Promise<T | null | undefined | false>, timeoutMs: number): Promise<T> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe();
    if (value) return value;
    if (Date.now() > end) {
      const logs = [...workers].map(([n, w]) => `--- ${n}\n${w.output().slice(-1500)}`).join("\n");
      throw new Error(`timed out waiting for ${what}\n${logs}\n--- server\n${server?.output().slice(-3000)}`);
    }
    await new Promise((r) => setTimeout(r, 50));
  }
}

/** What a scan measured and judged, without what legitimately differs (timestamps, image paths, ids). */
function measured(f: Pick<FileReport, "path" | "sizeBytes" | "sha256" | "format" | "metadata" | "metrics" | "verdict" | "error"> & { findings: FileReport["findings"] }) {
  return {
    path: f.path,
    sizeBytes: f.sizeBytes,
    sha256: f.sha256,
    format: f.format,
    metadata: f.metadata,
    metrics: f.metrics,
    verdict: f.verdict,
    error: f.error,
    findings: f.findings.map(({ code, severity, channel, startSeconds, endSeconds, message }) => ({ code, severity, channel, startSeconds, endSeconds, message })),
  };
}

beforeAll(async () => {
  testDb = await createTestDatabase("distributed");
  db = connectDatabase(testDb.url, { poolMax: 3 });
  await migrateUp(db.sequelize);
  initModels(db.sequelize);
  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "distributed-"));
  archive = path.join(dir, "harbourside", "ferry-terminal-1978");
  writeTransferSet(archive, FILES, SECONDS);
  const tech = await User.create({ email: "night.shift@harbourside.test", name: "Night Shift", role: "technician", passwordHash: "scrypt$unused" });
  const sup = await User.create({ email: "reviewer@harbourside.test", name: "Reviewer", role: "supervisor", passwordHash: "scrypt$unused" });
  techToken = (await createApiToken(tech.id, "workers")).plaintext;
  supervisorToken = (await createApiToken(sup.id, "checks")).plaintext;
  server = await startChildServer({
    DATABASE_URL: testDb.url,
    DATA_DIR: dir,
    OBJECT_STORE_DIR: path.join(dir, "objects"),
    SESSION_SECRET: "distributed-test-secret-0123456789abcdef",
    TIDEMARK_JOB_EXPIRE_SECONDS: "600",
    TIDEMARK_JOB_HEARTBEAT_SECONDS: String(HEARTBEAT_SECONDS),
    TIDEMARK_JOB_RETRY_LIMIT: "3",
    TIDEMARK_QUEUE_MAINTENANCE_SECONDS: "1",
  });
});

afterAll(async () => {
  for (const w of workers.values()) if (w.child.exitCode === null && w.child.signalCode === null) w.child.kill("SIGKILL");
  await server?.kill("SIGTERM");
  await db.close();
  await testDb.drop();
  rmSync(dir, { recursive: true, force: true });
});

it("scans 40 files on 3 worker processes, survives a SIGKILLed worker, and matches a single scan", { timeout: 150_000 }, async () => {
  const started = Date.now();
  const reference = await runCli(["scan", archive, "--format", "json", "-q"], { cwd: dir, env: isolatedEnv() });
  expect(reference.exitCode, reference.stderr).toBe(1);
  const single = JSON.parse(reference.stdout) as ScanReport;
  expect(single.files).toHaveLength(FILES);

  for (const name of ["w1", "w2", "w3"]) startWorker(name);
  const enqueue = await runCli(["enqueue", archive, "--server", server!.url, "--collection", "Ferry Terminal Interviews 1978", "--json"], {
    cwd: dir,
    env: isolatedEnv({ TIDEMARK_TOKEN: techToken }),
  });
  expect(enqueue.exitCode, enqueue.stderr).toBe(0);
  const queued = JSON.parse(enqueue.stdout) as { run: { id: number; batchId: number }; added: number };
  expect(queued.added).toBe(FILES);
  const runId = queued.run.id;

  // Kill w2 while it holds a job, after it has delivered at least one. It is frozen first, so the job it
  // holds cannot slip out as a result between looking and killing.
  const w2 = workers.get("w2")!;
  const victim = await until(
    "w2 to hold a job that it will never deliver",
    async () => {
      if ((await ScanJobAttempt.count({ where: { worker: "w2", outcome: "done" } })) === 0) return null;
      if (!(await ScanJobAttempt.findOne({ where: { worker: "w2", endedAt: null } }))) return null;
      w2.child.kill("SIGSTOP");
      // A result already on the wire still lands; give it time before trusting what is open.
      await new Promise((r) => setTimeout(r, 500));
      const held = await ScanJobAttempt.findOne({ where: { worker: "w2", endedAt: null } });
      if (!held) w2.child.kill("SIGCONT");
      return held;
    },
    60_000,
  );
  w2.child.kill("SIGKILL");
  expect((await w2.exit).signal).toBe("SIGKILL");

  const run = await until(
    "every job to be done",
    async () => {
      const res = await fetch(`${server!.url}/api/runs/${runId}`, { headers: { authorization: `Bearer ${supervisorToken}` } });
      const body = (await res.json()) as ScanRunDetailDto;
      return body.counts.done + body.counts.failed === FILES && body;
    },
    90_000,
  );
  expect(run.counts).toMatchObject({ total: FILES, done: FILES, failed: 0, queued: 0, active: 0 });
  expect(run.state).toBe("done");

  // Exactly one result per file, none lost.
  const results = await FileResult.findAll({ where: { batchId: run.batchId } });
  expect(results).toHaveLength(FILES);
  expect(new Set(results.map((r) => r.path)).size).toBe(FILES);
  expect(results.map((r) => r.path).sort()).toEqual(single.files.map((f) => f.path).sort());
  expect(results.every((r) => r.spectrogramKey !== null && r.waveformKey !== null)).toBe(true);

  // The killed worker's job went to another worker once its heartbeats stopped, counted as a failed attempt.
  const retriedJob = await ScanJob.findByPk(victim.jobId);
  expect(retriedJob?.state).toBe("done");
  expect(retriedJob!.attempts).toBeGreaterThanOrEqual(2);
  const attempts = await ScanJobAttempt.findAll({ where: { jobId: victim.jobId }, order: [["attempt", "ASC"]] });
  expect(attempts[0]).toMatchObject({ worker: "w2", attempt: victim.attempt, outcome: "expired" });
  const delivered = attempts.filter((a) => a.outcome === "done");
  expect(delivered).toHaveLength(1);
  expect(["w1", "w3"]).toContain(delivered[0].worker);
  const [queueRow] = await db.sequelize.query<{ retry_count: number; state: string }>(`select retry_count, state from pgboss.job where id = $1`, {
    bind: [retriedJob!.queueJobId],
    type: QueryTypes.SELECT,
  });
  expect(queueRow).toEqual({ retry_count: expect.any(Number), state: "completed" });
  expect(retriedJob!.failures).toBeGreaterThanOrEqual(1);
  expect(attempts[0].message).toMatch(/^attempt \d+ by w2: no heartbeat for \d+ s \(limit 5 s\)/);
  const openAttemptsOfW2 = await ScanJobAttempt.count({ where: { worker: "w2", endedAt: null } });
  expect(openAttemptsOfW2).toBe(0);

  // The same measurements, findings and verdicts as one `tidemark scan` of the folder.
  const exported = await fetch(`${server!.url}/api/exports/batches/${run.batchId}.json`, { headers: { authorization: `Bearer ${supervisorToken}` } });
  expect(exported.status).toBe(200);
  const batch = (await exported.json()) as { batch: { counts: ScanReport["summary"] }; files: Parameters<typeof measured>[0][] };
  const byPath = (a: { path: string }, b: { path: string }) => (a.path < b.path ? -1 : 1);
  expect(batch.files.map(measured).sort(byPath)).toEqual(single.files.map(measured).sort(byPath));
  expect(batch.batch.counts).toEqual(single.summary);
  expect(single.summary.fail + single.summary.warn).toBeGreaterThan(0);

  // The survivors stop cleanly on SIGTERM.
  for (const name of ["w1", "w3"]) workers.get(name)!.child.kill("SIGTERM");
  for (const name of ["w1", "w3"]) expect(await workers.get(name)!.exit, workers.get(name)!.output()).toEqual({ code: 0, signal: null });
  expect(workers.get("w1")!.output()).toMatch(/worker w1 stopped: \d+ done/);
  expect(Date.now() - started).toBeLessThan(120_000);
});
