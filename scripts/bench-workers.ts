/**
 * Throughput of distributed scanning with 1, 2 and 3 worker processes on this machine (issue #10), not
 * part of `npm test`: a throwaway PostgreSQL, the real server (pg-boss included) on a loopback port,
 * synthesised 24-bit stereo files, `tidemark enqueue` into a fresh run per worker count, then that many
 * `tidemark worker` processes. Figures come from the server's own run status (first claim to last result)
 * and from the wall clock; a local `tidemark scan --workers N` of the same files, for each N measured,
 * is the baseline (issue #24's target: 2 workers within 1.25× of `scan --workers 2`).
 *
 *   node --import tsx scripts/bench-workers.ts [--files 24] [--seconds 60] [--workers 1,2,3]
 *                                              [--concurrency 1] [--no-images] [--from-source] [--out result.json]
 *                                              [--repeats 1] [--wait-calm SECONDS] [--profile-server DIR]
 *
 * The CLI is prebuilt first (cli/bin/build.mjs), as for `npm run bench`, so worker start-up (tsx compiling
 * the sources) does not eat into the measured time; --from-source skips that.
 * Each worker measures `--concurrency` files at once (default 1). The machine is shared, so the load of
 * other processes is measured before every run and reported beside it; --wait-calm waits up to that long
 * for it to drop below a quarter of a core first, and --repeats takes the median of several runs.
 * Each run also says where the time and the CPU went: enqueue, enqueue → first claim, first claim → last
 * result, and the CPU seconds of the workers, the server and PostgreSQL (from /proc) beside the local
 * scan's. --profile-server writes the server's V8 CPU profile (node --cpu-prof) into DIR when it stops.
 * The last lines hold the run against issue #24's target (2 workers' wall from enqueue ≤ 1.25× the local
 * `scan --workers 2`) and say whether it was met.
 */
import { execFileSync, spawn, type ChildProcess } from "node:child_process";
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { availableParallelism, cpus, tmpdir } from "node:os";
import path from "node:path";
import type { ScanRunDetailDto } from "@tidemark/shared/types/api";
import { connectDatabase } from "../server/src/db/connect.ts";
import { initModels, User } from "../server/src/models/index.ts";
import { createApiToken } from "../server/src/services/apiTokens.ts";
import { staleBundleSources } from "../cli/bin/bundleState.mjs";
import { machineBusyCores } from "./bench/measure.ts";
import { followCpu, processCpuSeconds, treeCpuSeconds } from "./bench/processCpu.ts";
import { synthesiseWav } from "./bench/synthWav.ts";
import { projectRoot } from "./lib/paths.ts";
import { claimThrowawayDir, ensurePostgresInstalled, freePort, startCluster } from "./lib/postgres.ts";

interface Options {
  files: number;
  seconds: number;
  workers: number[];
  concurrency: number;
  images: boolean;
  fromSource: boolean;
  repeats: number;
  waitCalmSeconds: number;
  profileServerDir: string | null;
  out: string | null;
}

/** Where one run's time and CPU went (medians over the repeats). */
interface RunPhases {
  /** The `tidemark enqueue` command, start to exit. */
  enqueueSeconds: number;
  /** From starting enqueue to the server's first claim. */
  toFirstClaimSeconds: number;
  /** CPU seconds of all the worker processes (threads included), of the server and of PostgreSQL. */
  workerCpuSeconds: number;
  serverCpuSeconds: number;
  postgresCpuSeconds: number;
  enqueueCpuSeconds: number;
}

interface RunFigures {
  workers: number;
  files: number;
  audioSeconds: number;
  /** From the first claim to the last result, as the server records them. */
  busySeconds: number;
  filesPerMinute: number;
  realTimeFactor: number;
  /** From starting `tidemark enqueue` to the server's record of the last result (workers already waiting). */
  wallSeconds: number;
  speedUp: number;
  /** Cores other processes kept busy just before the run(s), worst of the repeats. */
  otherLoadCores: number;
  /** Every repeat's first-claim-to-last-result time; busySeconds is their median. */
  samples: number[];
  /** `tidemark scan --workers <workers>` of the same files on this machine, wall time, start-up included (median). */
  localScanSeconds: number;
  /** Median over the repeats of wall ÷ the local scan measured just before (both include one CLI start-up). */
  vsLocal: number;
  /** CPU seconds of the local scan of the same files. */
  localScanCpuSeconds: number;
  phases: RunPhases;
}

/** Everything a distributed run spent, in CPU seconds: on a machine whose cores are all busy this bounds its wall time. */
const cpuOfRun = (p: RunPhases): number => p.workerCpuSeconds + p.serverCpuSeconds + p.postgresCpuSeconds + p.enqueueCpuSeconds;

/** Issue #24: 2 workers on one machine, wall from enqueue, within this factor of `scan --workers 2`. */
const TARGET_VS_LOCAL = 1.25;

/** How often the bench asks the server whether a run is done. */
const RUN_POLL_MS = 1_000;

/** Other processes using less than this count as a calm machine. */
const CALM_BUSY_CORES = 0.25;

const log = (line: string): void => void process.stderr.write(`[bench-workers] ${line}\n`);
const BIN = path.join(projectRoot, "cli", "bin", "tidemark.js");

function parseOptions(argv: string[]): Options {
  const o: Options = { files: 24, seconds: 60, workers: [1, 2, 3], concurrency: 1, images: true, fromSource: false, repeats: 1, waitCalmSeconds: 0, profileServerDir: null, out: null };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const value = (): string => {
      const v = argv[++i];
      if (v === undefined) throw new Error(`${a} needs a value`);
      return v;
    };
    const whole = (v: string, min: number): number => {
      const n = Number(v);
      if (!Number.isInteger(n) || n < min) throw new Error(`${a} expects a whole number ≥ ${min}, got "${v}"`);
      return n;
    };
    if (a === "--files") o.files = whole(value(), 1);
    else if (a === "--seconds") o.seconds = whole(value(), 1);
    else if (a === "--workers") o.workers = value().split(",").map((v) => whole(v, 1));
    else if (a === "--concurrency") o.concurrency = whole(value(), 1);
    else if (a === "--no-images") o.images = false;
    else if (a === "--from-source") o.fromSource = true;
    else if (a === "--repeats") o.repeats = whole(value(), 1);
    else if (a === "--wait-calm") o.waitCalmSeconds = whole(value(), 0);
    else if (a === "--out") o.out = value();
    else if (a === "--profile-server") o.profileServerDir = path.resolve(value());
    else throw new Error(`unknown option ${a} (see the comment at the top of scripts/bench-workers.ts)`);
  }
  return o;
}

function run(args: string[], env: NodeJS.ProcessEnv): Promise<{ code: number | null; stdout: string; stderr: string; cpuSeconds: number }> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [BIN, ...args], { env, stdio: ["ignore", "pipe", "pipe"] });
    const cpu = followCpu(child.pid);
    let stdout = "";
    let stderr = "";
    child.stdout.on("data", (c: Buffer) => void (stdout += c.toString()));
    child.stderr.on("data", (c: Buffer) => void (stderr += c.toString()));
    child.once("exit", (code) => {
      cpu.stop();
      resolve({ code, stdout, stderr, cpuSeconds: cpu.last() });
    });
  });
}

async function waitFor<T>(what: string, probe: () => Promise<T | null>, timeoutMs: number, everyMs = 100): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe().catch(() => null);
    if (value) return value;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}

async function main(): Promise<void> {
  const o = parseOptions(process.argv.slice(2));
  // Others may edit the sources meanwhile: rebuild whenever the bundle went stale, before every run.
  const ensureBundle = (): void => {
    if (o.fromSource) return;
    if (staleBundleSources()?.length === 0) return;
    execFileSync(process.execPath, [path.join(projectRoot, "cli/bin/build.mjs")], { stdio: ["ignore", "ignore", "inherit"] });
  };
  ensureBundle();
  const work = mkdtempSync(path.join(tmpdir(), "tidemark-bench-workers-"));
  claimThrowawayDir(work);
  const children: ChildProcess[] = [];
  const bins = ensurePostgresInstalled(log);
  const cluster = await startCluster(bins, { dataDir: path.join(work, "pg"), port: await freePort(), throwaway: true, log });
  const cleanUp = async (): Promise<void> => {
    for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill("SIGTERM");
    await new Promise((r) => setTimeout(r, 1500));
    await cluster.stop().catch((e: unknown) => log(`stopping PostgreSQL: ${String(e)}`));
    rmSync(work, { recursive: true, force: true });
  };
  // Ctrl-C: the server, the workers and PostgreSQL go too, and the temporary folder is removed.
  for (const signal of ["SIGINT", "SIGTERM"] as const) {
    process.once(signal, () => {
      log(`${signal}: stopping`);
      void cleanUp().finally(() => process.exit(130));
    });
  }
  try {
    await cluster.createDatabase("bench");
    const databaseUrl = cluster.url("bench");
    const port = await freePort();
    const profileArgs = o.profileServerDir ? ["--cpu-prof", "--cpu-prof-dir", o.profileServerDir] : [];
    const server = spawn(process.execPath, [...profileArgs, "--import", "tsx", path.join(projectRoot, "server/src/main.ts")], {
      cwd: projectRoot,
      env: { ...process.env, DATABASE_URL: databaseUrl, HOST: "127.0.0.1", PORT: String(port), DATA_DIR: path.join(work, "data"), DEMO_SEED: "0", NODE_ENV: "production", SESSION_SECRET: "bench-workers-secret-0123456789abcdefgh" },
      stdio: ["ignore", "ignore", "inherit"],
    });
    children.push(server);
    const url = `http://127.0.0.1:${port}`;
    await waitFor("the server", async () => ((await fetch(`${url}/api/health`)).status === 200 ? true : null), 60_000);
    const postmasterPid = Number(readFileSync(path.join(work, "pg", "postmaster.pid"), "utf8").split("\n")[0]);

    const db = connectDatabase(databaseUrl, { poolMax: 1 });
    initModels(db.sequelize);
    const user = await User.create({ email: "bench@harbourside.test", name: "Benchmark", role: "technician", passwordHash: "scrypt$unused" });
    const token = (await createApiToken(user.id, "bench")).plaintext;
    await db.close();
    const env: NodeJS.ProcessEnv = { ...process.env, TIDEMARK_FROM_SOURCE: o.fromSource ? "1" : "0", TIDEMARK_TOKEN: token, TIDEMARK_CONFIG_DIR: path.join(work, "config"), TIDEMARK_SPOOL_DIR: path.join(work, "spool") };
    delete env.DATABASE_URL;

    const audio = path.join(work, "archive", "lighthouse-choir");
    mkdirSync(audio, { recursive: true });
    log(`synthesising ${o.files} files of ${o.seconds} s (48 kHz, 24-bit, stereo pink noise)`);
    for (let i = 0; i < o.files; i++) {
      await synthesiseWav({ path: path.join(audio, `reel-${String(i + 1).padStart(3, "0")}.wav`), seconds: o.seconds, sampleRateHz: 48_000, channels: 2, bitDepth: 24, noise: "pink", rmsDbfs: -20, seed: 17 + i });
    }

    /** Waits (up to --wait-calm) for other processes to leave the cores free; returns their load. */
    const calmLoad = async (): Promise<number> => {
      const until = Date.now() + o.waitCalmSeconds * 1000;
      for (;;) {
        const load = await machineBusyCores(2_000);
        if (load < CALM_BUSY_CORES || Date.now() >= until) return load;
        log(`other processes keep ${load.toFixed(2)} cores busy; waiting for a calmer moment`);
      }
    };

    /** A local scan of the same files with `workers` threads: the figure distributed scanning is held to. */
    const localScan = async (workers: number): Promise<{ seconds: number; load: number; cpuSeconds: number }> => {
      const load = await calmLoad();
      ensureBundle();
      log(`baseline: tidemark scan --workers ${workers} of the same files`);
      const start = performance.now();
      const scan = await run(["scan", audio, "--workers", String(workers), "--format", "json", "--quiet", ...(o.images ? ["--spectrograms", path.join(work, `png-${workers}`)] : [])], env);
      const seconds = (performance.now() - start) / 1000;
      if (scan.code !== 0 && scan.code !== 1) throw new Error(`scan failed (${scan.code}): ${scan.stderr}`);
      log(`scan --workers ${workers}: ${seconds.toFixed(1)} s, ${scan.cpuSeconds.toFixed(1)} CPU s`);
      return { seconds, load, cpuSeconds: scan.cpuSeconds };
    };
    const local = new Map<number, { seconds: number; load: number; cpuSeconds: number }>();
    for (const count of new Set([1, ...o.workers])) local.set(count, await localScan(count));
    /** Every local scan per worker count: repeats after the first measure the local scan again just before. */
    const localSamples = new Map([...local].map(([n, l]) => [n, [l]]));
    const scanSeconds = local.get(1)!.seconds;
    const scanLoad = local.get(1)!.load;

    /** One run: `count` workers, a fresh run of every file; seconds from first claim to last result. */
    const measureOnce = async (count: number, repeat: number): Promise<{ busySeconds: number; wallSeconds: number; phases: RunPhases }> => {
      const names = Array.from({ length: count }, (_, i) => `bench-${count}-${repeat}-${i + 1}`);
      const workerArgs = ["--server", url, "--poll", "0.2", "--quiet", "--concurrency", String(o.concurrency), ...(o.images ? [] : ["--no-images"])];
      const workers = names.map((name) => spawn(process.execPath, [BIN, "worker", ...workerArgs, "--name", name], { env, stdio: ["ignore", "ignore", "inherit"] }));
      children.push(...workers);
      const workerCpu = workers.map((w) => followCpu(w.pid));
      const exits = workers.map((w) => new Promise<number | null>((resolve) => w.once("exit", (code) => resolve(code))));
      const serverCpuBefore = await processCpuSeconds(server.pid);
      const postgresCpuBefore = await treeCpuSeconds(postmasterPid);
      const started = performance.now();
      const startedAt = Date.now();
      // A collection of its own per run: the same files scanned again would otherwise be matched as duplicate
      // transfers of every earlier run's, work a real first scan does not do.
      const stamp = `${count} worker(s), repeat ${repeat}, ${Date.now()}`;
      const enqueued = await run(["enqueue", audio, "--server", url, "--collection", `Harbourside benchmark ${stamp}`, "--run", stamp, "--json"], env);
      const enqueueEnded = performance.now() - started;
      if (enqueued.code !== 0) throw new Error(`enqueue failed (${enqueued.code}): ${enqueued.stderr}`);
      const runId = (JSON.parse(enqueued.stdout) as { run: { id: number } }).run.id;
      const done = await waitFor(
        `run ${runId}`,
        async () => {
          const body = (await (await fetch(`${url}/api/runs/${runId}`, { headers: { authorization: `Bearer ${token}` } })).json()) as ScanRunDetailDto;
          return body.counts.done + body.counts.failed === o.files ? body : null;
        },
        3_600_000,
        // The run is looked at seldom (each look costs the server CPU the workers share); the wall time
        // comes from the server's own timestamp of the last result, on this machine's clock.
        RUN_POLL_MS,
      );
      const wallSeconds = (Date.parse(done.lastResultAt!) - startedAt) / 1000;
      const serverCpuSeconds = (await processCpuSeconds(server.pid)) - serverCpuBefore;
      const postgresCpuSeconds = (await treeCpuSeconds(postmasterPid)) - postgresCpuBefore;
      for (const w of workers) w.kill("SIGTERM");
      const codes = await Promise.all(exits);
      for (const c of workerCpu) c.stop();
      const phases: RunPhases = {
        enqueueSeconds: enqueueEnded / 1000,
        toFirstClaimSeconds: (Date.parse(done.firstClaimAt!) - startedAt) / 1000,
        workerCpuSeconds: workerCpu.reduce((sum, c) => sum + c.last(), 0),
        serverCpuSeconds,
        postgresCpuSeconds,
        enqueueCpuSeconds: enqueued.cpuSeconds,
      };
      if (codes.some((c) => c !== 0)) throw new Error(`a worker exited with ${codes.join(", ")}`);
      if (done.counts.failed > 0) throw new Error(`${done.counts.failed} job(s) failed`);
      return { busySeconds: (Date.parse(done.lastResultAt!) - Date.parse(done.firstClaimAt!)) / 1000, wallSeconds, phases };
    };

    const median = (xs: number[]): number => {
      const sorted = [...xs].sort((a, b) => a - b);
      const mid = sorted.length >> 1;
      return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
    };

    const figures: RunFigures[] = [];
    const audioSeconds = o.files * o.seconds;
    for (const count of o.workers) {
      const samples: number[] = [];
      const walls: number[] = [];
      const phaseSamples: RunPhases[] = [];
      let otherLoadCores = 0;
      const ratios: number[] = [];
      for (let repeat = 1; repeat <= o.repeats; repeat++) {
        // The machine's load drifts: each later repeat is paired with a local scan measured just before it.
        if (repeat > 1) localSamples.get(count)?.push(await localScan(count));
        const paired = localSamples.get(count)?.at(-1);
        otherLoadCores = Math.max(otherLoadCores, await calmLoad());
        ensureBundle();
        const once = await measureOnce(count, repeat);
        samples.push(once.busySeconds);
        walls.push(once.wallSeconds);
        phaseSamples.push(once.phases);
        if (paired) ratios.push(once.wallSeconds / paired.seconds);
        const p = once.phases;
        log(
          `${count} worker(s), repeat ${repeat}: ${once.busySeconds.toFixed(1)} s first claim → last result, ${once.wallSeconds.toFixed(1)} s from enqueue ` +
            `(enqueue ${p.enqueueSeconds.toFixed(1)} s, first claim after ${p.toFirstClaimSeconds.toFixed(1)} s); CPU s: workers ${p.workerCpuSeconds.toFixed(1)}, ` +
            `server ${p.serverCpuSeconds.toFixed(1)}, PostgreSQL ${p.postgresCpuSeconds.toFixed(1)}, enqueue ${p.enqueueCpuSeconds.toFixed(1)}`,
        );
      }
      const busySeconds = median(samples);
      const figure: RunFigures = {
        workers: count,
        files: o.files,
        audioSeconds,
        busySeconds,
        filesPerMinute: (o.files / busySeconds) * 60,
        realTimeFactor: audioSeconds / busySeconds,
        wallSeconds: median(walls),
        speedUp: figures.length ? figures[0].busySeconds / busySeconds : 1,
        otherLoadCores,
        samples,
        localScanSeconds: median((localSamples.get(count) ?? []).map((l) => l.seconds)),
        vsLocal: ratios.length ? median(ratios) : Number.NaN,
        localScanCpuSeconds: median((localSamples.get(count) ?? []).map((l) => l.cpuSeconds)),
        phases: {
          enqueueSeconds: median(phaseSamples.map((p) => p.enqueueSeconds)),
          toFirstClaimSeconds: median(phaseSamples.map((p) => p.toFirstClaimSeconds)),
          workerCpuSeconds: median(phaseSamples.map((p) => p.workerCpuSeconds)),
          serverCpuSeconds: median(phaseSamples.map((p) => p.serverCpuSeconds)),
          postgresCpuSeconds: median(phaseSamples.map((p) => p.postgresCpuSeconds)),
          enqueueCpuSeconds: median(phaseSamples.map((p) => p.enqueueCpuSeconds)),
        },
      };
      figures.push(figure);
      log(`${count} worker(s): ${busySeconds.toFixed(1)} s, ${figure.filesPerMinute.toFixed(1)} files/min, ${figure.realTimeFactor.toFixed(0)}× real time (other load up to ${otherLoadCores.toFixed(2)} cores)`);
    }

    const cpu = cpus()[0]?.model ?? "unknown CPU";
    const lines = [
      `Machine: ${availableParallelism()} cores (${cpu}), Node ${process.version}; ${o.files} files × ${o.seconds} s, 48 kHz 24-bit stereo, images ${o.images ? "on" : "off"}, ${o.concurrency} job(s) per worker`,
      `Baseline: tidemark scan --workers 1: ${scanSeconds.toFixed(1)} s wall (start-up included; other load ${scanLoad.toFixed(2)} cores); ` +
        [...local.entries()].map(([n, l]) => `--workers ${n}: ${l.seconds.toFixed(1)} s`).join(", "),
      "",
      `Median of ${o.repeats} run(s) each; "other load" is what other processes kept busy just before a run (worst of the repeats).`,
      "",
      "| workers | first claim → last result | files/min | × real time | speed-up | wall from enqueue | local scan --workers N | wall ÷ local | other load | runs |",
      "|---|---|---|---|---|---|---|---|---|---|",
      ...figures.map(
        (f) =>
          `| ${f.workers} | ${f.busySeconds.toFixed(1)} s | ${f.filesPerMinute.toFixed(1)} | ${f.realTimeFactor.toFixed(0)}× | ${f.speedUp.toFixed(2)} | ${f.wallSeconds.toFixed(1)} s | ${f.localScanSeconds.toFixed(1)} s | ${f.vsLocal.toFixed(2)}× | ${f.otherLoadCores.toFixed(2)} cores | ${f.samples.map((x) => x.toFixed(1)).join(", ")} s |`,
      ),
      "",
      "Where it went (medians): CPU seconds of the workers, server, PostgreSQL and enqueue against the local scan's.",
      "",
      "| workers | enqueue | enqueue → first claim | CPU: workers | server | PostgreSQL | enqueue | all | local scan CPU |",
      "|---|---|---|---|---|---|---|---|---|",
      ...figures.map((f) => {
        const p = f.phases;
        const all = cpuOfRun(p);
        return `| ${f.workers} | ${p.enqueueSeconds.toFixed(1)} s | ${p.toFirstClaimSeconds.toFixed(1)} s | ${p.workerCpuSeconds.toFixed(1)} s | ${p.serverCpuSeconds.toFixed(1)} s | ${p.postgresCpuSeconds.toFixed(1)} s | ${p.enqueueCpuSeconds.toFixed(1)} s | ${all.toFixed(1)} s | ${f.localScanCpuSeconds.toFixed(1)} s |`;
      }),
    ];
    const two = figures.find((f) => f.workers === 2);
    if (two) {
      const met = two.vsLocal <= TARGET_VS_LOCAL;
      lines.push(
        "",
        `Target (issue #24): 2 workers, wall from enqueue ≤ ${TARGET_VS_LOCAL}× local scan --workers 2; measured ${two.vsLocal.toFixed(2)}× ` +
          `(${two.wallSeconds.toFixed(1)} s vs ${two.localScanSeconds.toFixed(1)} s; first claim → last result ${(two.busySeconds / two.localScanSeconds).toFixed(2)}×; ` +
          `CPU of workers, server, PostgreSQL and enqueue ÷ the local scan's ${(cpuOfRun(two.phases) / two.localScanCpuSeconds).toFixed(2)}×): ${met ? "met" : "NOT met"}` +
          (two.otherLoadCores >= CALM_BUSY_CORES ? ` (machine busy: other processes kept ${two.otherLoadCores.toFixed(2)} cores busy)` : ""),
      );
    } else {
      lines.push("", `Target (issue #24): needs a run with 2 workers (--workers 2); not measured`);
    }
    process.stdout.write(`${lines.join("\n")}\n`);
    if (o.out) writeFileSync(o.out, `${JSON.stringify({ machine: { cores: availableParallelism(), cpu, node: process.version }, options: o, scanSeconds, localScans: Object.fromEntries(local), figures }, null, 2)}\n`);
  } finally {
    await cleanUp();
  }
}

main().catch((e: unknown) => {
  log(e instanceof Error ? e.message : String(e));
  process.exit(1);
});
