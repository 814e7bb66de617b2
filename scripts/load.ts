/**
 * `npm run load [-- result.json]`: the bounded loopback load test. Starts a throwaway PostgreSQL, seeds
 * 100 000 file results, runs the real server as its own process, then 50 concurrent clients (each signed
 * in with its own session) list and filter files for 30 s. By default a client sends its next request as
 * soon as the last one is answered (saturation); LOAD_THINK_MS gives each client a pause between
 * requests, like a person reading the page. Prints p50/p95/p99/max per request kind and overall, and the
 * errors (any non-200 or network failure); exits 1 on errors. LOAD_CLIENTS, LOAD_SECONDS and LOAD_ROWS
 * override the other defaults.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { Sequelize } from "sequelize";
import { CSRF_HEADER, FILE_SORT_KEYS } from "@tidemark/shared/types/api";
import { migrateUp } from "../server/src/db/migrator.ts";
import { hashPassword } from "../server/src/services/passwords.ts";
import { claimThrowawayDir, ensurePostgresInstalled, freePort, startCluster, sweepStaleThrowawayDirs, type RunningCluster } from "./lib/postgres.ts";
import { projectRoot } from "./lib/paths.ts";
import { seedBulkFileResults, type BulkSeedResult } from "./seed-bulk.ts";

const CLIENTS = Number(process.env.LOAD_CLIENTS ?? 50);
const SECONDS = Number(process.env.LOAD_SECONDS ?? 30);
const ROWS = Number(process.env.LOAD_ROWS ?? 100_000);
const THINK_MS = Number(process.env.LOAD_THINK_MS ?? 0);
const P95_TARGET_MS = 200;
const PASSWORD = "load test passphrase";
const PREFIX = "tidemark-load-";

const log = (line: string): void => console.error(`[load] ${line}`);

let cluster: RunningCluster | null = null;
let server: ChildProcess | null = null;
let workDir: string | null = null;

async function cleanUp(): Promise<void> {
  if (server && server.exitCode === null) {
    const exited = new Promise((r) => server!.once("exit", r));
    server.kill("SIGTERM");
    await exited;
  }
  await cluster?.stop();
  if (workDir) rmSync(workDir, { recursive: true, force: true });
}

for (const sig of ["SIGINT", "SIGTERM"] as const) process.on(sig, () => void cleanUp().finally(() => process.exit(130)));

const pick = <T>(xs: readonly T[]): T => xs[Math.floor(Math.random() * xs.length)];

/** The request mix: what the Files screen asks while people page, sort and filter. */
function nextRequest(seed: BulkSeedResult): { kind: string; path: string } {
  const sort = pick(FILE_SORT_KEYS);
  const order = pick(["asc", "desc"]);
  const page = 1 + Math.floor(Math.random() * 20);
  const paging = `sort=${sort}&order=${order}&page=${page}&pageSize=50`;
  const kinds: [string, () => string][] = [
    ["list", () => ""],
    ["verdict", () => `verdict=${pick(["pass", "warn", "fail", "error"])}`],
    ["reviewState", () => `reviewState=${pick(["pending", "accepted", "flagged", "retransfer"])}`],
    ["finding", () => `finding=${pick(["clipping", "hum", "dropout", "dc-offset", "band-limited"])}`],
    ["collection", () => `collection=${pick(seed.collectionIds)}`],
    ["batch", () => `batch=${pick(seed.batchIds)}`],
    ["search", () => `q=take-${String(Math.floor(Math.random() * 40)).padStart(2, "0")}`],
    ["combined", () => `verdict=fail&collection=${pick(seed.collectionIds)}&reviewState=pending`],
  ];
  const [kind, filter] = pick(kinds);
  const f = filter();
  return { kind, path: `/api/files?${f ? `${f}&` : ""}${paging}` };
}

const percentile = (sorted: number[], p: number): number => (sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil(p * sorted.length) - 1)] : NaN);

function summarise(times: number[]) {
  const sorted = [...times].sort((a, b) => a - b);
  const r = (x: number) => Math.round(x * 10) / 10;
  return { count: sorted.length, p50: r(percentile(sorted, 0.5)), p95: r(percentile(sorted, 0.95)), p99: r(percentile(sorted, 0.99)), max: r(sorted[sorted.length - 1] ?? NaN) };
}

async function waitForHealth(url: string): Promise<void> {
  for (let i = 0; i < 120; i++) {
    const ok = await fetch(`${url}/api/health`).then((r) => r.ok, () => false);
    if (ok) return;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error("the server did not come up");
}

async function main(): Promise<void> {
  const bins = ensurePostgresInstalled(log);
  sweepStaleThrowawayDirs(tmpdir(), PREFIX, log);
  workDir = mkdtempSync(path.join(tmpdir(), PREFIX));
  claimThrowawayDir(workDir);
  cluster = await startCluster(bins, { dataDir: path.join(workDir, "pg"), port: await freePort(), throwaway: true, log });
  await cluster.createDatabase("tidemark");
  const url = cluster.url("tidemark");

  const sequelize = new Sequelize(url, { dialect: "postgres", logging: false });
  await migrateUp(sequelize);
  const seed = await seedBulkFileResults(sequelize, { files: ROWS });
  log(`seeded ${seed.files} file results in ${seed.batches} batches (${seed.ms} ms)`);
  const passwordHash = await hashPassword(PASSWORD);
  await sequelize.query(`insert into users (email, name, role, password_hash) values ('load.supervisor@harbourside.test', 'Load Supervisor', 'supervisor', $1)`, { bind: [passwordHash] });
  await sequelize.close();

  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  server = spawn(process.execPath, ["--import", "tsx", path.join(projectRoot, "server/src/main.ts")], {
    cwd: projectRoot,
    stdio: ["ignore", "ignore", "inherit"],
    env: { ...process.env, DATABASE_URL: url, PORT: String(port), HOST: "127.0.0.1", DEMO_SEED: "0", DATA_DIR: path.join(workDir, "data"), NODE_ENV: "production", SESSION_SECRET: "load-test-session-secret-0123456789abcdef" },
  });
  await waitForHealth(base);

  // One session per client, as 50 people in the portal would have.
  const cookies: string[] = [];
  for (let i = 0; i < CLIENTS; i++) {
    const res = await fetch(`${base}/api/session`, {
      method: "POST",
      headers: { "content-type": "application/json", [CSRF_HEADER]: "1" },
      body: JSON.stringify({ email: "load.supervisor@harbourside.test", password: PASSWORD }),
    });
    if (!res.ok) throw new Error(`sign-in ${i} failed: ${res.status}`);
    cookies.push(res.headers.getSetCookie()[0].split(";")[0]);
  }

  const get = async (cookie: string, p: string): Promise<number> => {
    const res = await fetch(`${base}${p}`, { headers: { cookie } });
    await res.arrayBuffer();
    return res.status;
  };
  // Warm-up (not counted): JIT, caches, pools.
  await Promise.all(cookies.slice(0, 10).map(async (c) => { for (let i = 0; i < 10; i++) await get(c, nextRequest(seed).path); }));

  log(`${CLIENTS} clients, ${SECONDS} s, ${ROWS} rows, think time ${THINK_MS} ms…`);
  const byKind = new Map<string, number[]>();
  const all: number[] = [];
  const errors: Record<string, number> = {};
  const deadline = Date.now() + SECONDS * 1000;
  const started = Date.now();
  await Promise.all(
    cookies.map(async (cookie) => {
      while (Date.now() < deadline) {
        const { kind, path: p } = nextRequest(seed);
        const t0 = performance.now();
        let status: number | string;
        try {
          status = await get(cookie, p);
        } catch (e) {
          status = (e as { cause?: { code?: string } }).cause?.code ?? "network";
        }
        const ms = performance.now() - t0;
        if (status !== 200) errors[String(status)] = (errors[String(status)] ?? 0) + 1;
        all.push(ms);
        if (!byKind.has(kind)) byKind.set(kind, []);
        byKind.get(kind)!.push(ms);
        // Jittered so the clients do not move in lockstep.
        if (THINK_MS > 0) await new Promise((r) => setTimeout(r, THINK_MS * (0.5 + Math.random())));
      }
    }),
  );
  const elapsed = (Date.now() - started) / 1000;
  const overall = summarise(all);
  const errorCount = Object.values(errors).reduce((a, b) => a + b, 0);
  const result = {
    clients: CLIENTS,
    seconds: SECONDS,
    thinkMs: THINK_MS,
    rows: ROWS,
    requests: all.length,
    requestsPerSecond: Math.round(all.length / elapsed),
    errors: errorCount,
    errorsByStatus: errors,
    overallMs: overall,
    byKindMs: Object.fromEntries([...byKind].sort().map(([k, v]) => [k, summarise(v)])),
    machine: { cpus: (await import("node:os")).cpus().length, node: process.version, loadAverage: (await import("node:os")).loadavg() },
  };
  console.log(`\nGET /api/files under load: ${CLIENTS} clients × ${SECONDS} s on ${ROWS} rows, think time ${THINK_MS} ms, loopback`);
  console.log(`requests ${result.requests} (${result.requestsPerSecond}/s), errors ${errorCount}${errorCount ? ` ${JSON.stringify(errors)}` : ""}`);
  console.log(`overall   p50 ${overall.p50} ms   p95 ${overall.p95} ms   p99 ${overall.p99} ms   max ${overall.max} ms`);
  for (const [kind, s] of Object.entries(result.byKindMs)) console.log(`${kind.padEnd(12)} n ${String(s.count).padStart(5)}   p50 ${s.p50}   p95 ${s.p95}   p99 ${s.p99}`);
  console.log(`target p95 < ${P95_TARGET_MS} ms and 0 errors: ${overall.p95 < P95_TARGET_MS && errorCount === 0 ? "met" : "NOT met"} (load average ${result.machine.loadAverage.map((l) => l.toFixed(1)).join(" ")})`);
  const out = process.argv[2];
  if (out) {
    writeFileSync(path.resolve(out), JSON.stringify(result, null, 2) + "\n");
    log(`wrote ${out}`);
  }
  process.exitCode = errorCount === 0 ? 0 : 1;
}

main()
  .catch((e: unknown) => {
    log(e instanceof Error ? (e.stack ?? e.message) : String(e));
    process.exitCode = 1;
  })
  .finally(() => void cleanUp());
