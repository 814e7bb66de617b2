/**
 * `npm start`: PostgreSQL (cluster kept in .data/pg, reused by later starts) on its own loopback port,
 * the local mail catcher (.data/mail), the portal build, and the server — which migrates, and seeds the
 * demo archive on an empty database by really scanning examples/ with the CLI.
 *
 * This process supervises the others. PostgreSQL and the server each run in a process group of their
 * own, so a Ctrl-C at the terminal reaches only this supervisor, which stops the server first (it
 * finishes its requests), then the mail catcher, then PostgreSQL. If the server or PostgreSQL dies, the
 * rest is stopped within STOP_BUDGET_MS and the command exits non-zero saying why. If this supervisor is
 * killed outright, the children's parent-death signal (setpriv --pdeathsig) stops them.
 *
 * Options: --no-build skips the portal build, the CLI bundle and the CLI tarball. --s3 keeps the server's
 * objects in a local S3 service (s3rver on loopback, its files in .data/s3, bucket "tidemark") instead of
 * .data/objects; it is stopped after the server. DATA_DIR moves .data (the process test uses a temporary
 * one); PORT, HOST and TIDEMARK_PG_PORT choose the ports.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import { DEFAULT_DEMO_PASSWORD, DEFAULT_HOST, DEFAULT_PORT } from "../server/src/config.ts";
import { startSmtpFake, type SmtpFake } from "../server/src/mail/smtpFake.ts";
import { ensurePostgresInstalled, freePort, startCluster, type RunningCluster } from "./lib/postgres.ts";
import { projectRoot } from "./lib/paths.ts";
import { S3_FAKE_CREDENTIALS, startS3Fake, type S3Fake } from "./lib/s3Fake.ts";

const log = (line: string): void => console.error(`[start] ${line}`);
const dataDir = path.resolve(projectRoot, process.env.DATA_DIR || ".data");
const build = !process.argv.slice(2).includes("--no-build");
const onS3 = process.argv.slice(2).includes("--s3");
/** The bucket `npm start -- --s3` keeps the server's objects in. */
const S3_BUCKET = "tidemark";
/** From the moment something dies to everything stopped. */
const STOP_BUDGET_MS = 10_000;
/** How long the server may take to finish its requests after SIGTERM (its own grace is 10 s). */
const SERVER_STOP_MS = 12_000;
const host = process.env.HOST || DEFAULT_HOST;
const port = Number(process.env.PORT || DEFAULT_PORT);
const demoPassword = process.env.DEMO_PASSWORD || DEFAULT_DEMO_PASSWORD;

let cluster: RunningCluster | null = null;
let smtp: SmtpFake | null = null;
let s3: S3Fake | null = null;
let server: ChildProcess | null = null;
let stopping: Promise<never> | null = null;

const isRunning = (child: ChildProcess | null): child is ChildProcess => child !== null && child.exitCode === null && child.signalCode === null;

function exited(child: ChildProcess): Promise<void> {
  return isRunning(child) ? new Promise((resolve) => child.once("exit", () => resolve())) : Promise.resolve();
}

function within<T>(ms: number, work: Promise<T>): Promise<T | "timeout"> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<"timeout">((resolve) => (timer = setTimeout(() => resolve("timeout"), ms)));
  return Promise.race([work, timeout]).finally(() => clearTimeout(timer));
}

/** Stops everything once, in order: server, S3 service, mail catcher, PostgreSQL; then exits with `code`. */
function stopAll(code: number, reason: string): Promise<never> {
  stopping ??= (async (): Promise<never> => {
    log(reason);
    if (isRunning(server)) {
      log(`stopping the server (pid ${server.pid})`);
      server.kill("SIGTERM");
      if ((await within(SERVER_STOP_MS, exited(server))) === "timeout") {
        log(`the server did not stop within ${SERVER_STOP_MS / 1000} s; killing it`);
        server.kill("SIGKILL");
        await exited(server);
      }
    }
    // From here on the budget: the S3 service, the mail catcher and PostgreSQL stop within STOP_BUDGET_MS.
    const deadline = setTimeout(() => {
      log(`PostgreSQL, the S3 service or the mail catcher did not stop within ${STOP_BUDGET_MS / 1000} s; killing PostgreSQL`);
      if (cluster && isRunning(cluster.process)) cluster.process.kill("SIGKILL");
      process.exit(code || 1);
    }, STOP_BUDGET_MS);
    if (s3) {
      log("stopping the S3 service");
      await within(3000, s3.close());
    }
    if (smtp) {
      log("stopping the mail catcher");
      await within(3000, smtp.close().catch(() => undefined));
    }
    if (cluster && isRunning(cluster.process)) {
      log(`stopping PostgreSQL (pid ${cluster.process.pid})`);
      // The server, its only client, is gone: nothing is left to wait for.
      await cluster.stop({ fast: true });
    }
    clearTimeout(deadline);
    log(code === 0 ? "stopped" : `stopped (exit code ${code})`);
    process.exit(code);
  })();
  return stopping;
}

for (const sig of ["SIGINT", "SIGTERM", "SIGHUP"] as const) process.on(sig, () => void stopAll(0, `${sig}: stopping`));

function describeExit(code: number | null, signal: NodeJS.Signals | null): string {
  return signal ? `killed by ${signal}` : `exit code ${code}`;
}

/** The cluster keeps the port it was first given, so a second start finds it where it left it. */
async function clusterPort(): Promise<number> {
  if (process.env.TIDEMARK_PG_PORT) return Number(process.env.TIDEMARK_PG_PORT);
  const file = path.join(dataDir, "pg.port");
  if (existsSync(file)) return Number(readFileSync(file, "utf8"));
  const chosen = await freePort();
  mkdirSync(dataDir, { recursive: true });
  writeFileSync(file, String(chosen));
  return chosen;
}

function run(cmd: string, args: string[]): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(cmd, args, { cwd: projectRoot, stdio: "inherit" });
    child.on("exit", (code) => (code === 0 ? resolve() : reject(new Error(`${cmd} ${args.join(" ")} exited with ${code}`))));
  });
}

async function main(): Promise<void> {
  const bins = ensurePostgresInstalled(log);
  cluster = await startCluster(bins, { dataDir: path.join(dataDir, "pg"), port: await clusterPort(), log, detached: true });
  log(`PostgreSQL pid ${cluster.process.pid}`);
  cluster.process.once("exit", (code, signal) => {
    if (!stopping) void stopAll(1, `PostgreSQL exited unexpectedly (${describeExit(code, signal)}); stopping the rest`);
  });
  await cluster.createDatabase("tidemark");

  smtp = await startSmtpFake({ dir: path.join(dataDir, "mail") });
  log(`mail catcher on ${smtp.url}; messages are stored in .data/mail`);

  if (onS3) {
    // Its own process group, like the server's: Ctrl-C reaches only this supervisor, which stops it after the server.
    s3 = await startS3Fake({ dir: path.join(dataDir, "s3"), bucket: S3_BUCKET, detached: true });
    log(`S3 service (s3rver, pid ${s3.pid}) on ${s3.endpoint}, bucket "${S3_BUCKET}"; objects are stored in .data/s3`);
    void s3.exited.then(({ code, signal }) => {
      if (!stopping) void stopAll(1, `the S3 service exited unexpectedly (${describeExit(code, signal)}); stopping the rest`);
    });
  }
  const objectStoreEnv: NodeJS.ProcessEnv = s3
    ? {
        OBJECT_STORE: "s3",
        S3_BUCKET,
        S3_ENDPOINT: s3.endpoint,
        S3_REGION: "us-east-1",
        S3_ACCESS_KEY_ID: S3_FAKE_CREDENTIALS.accessKeyId,
        S3_SECRET_ACCESS_KEY: S3_FAKE_CREDENTIALS.secretAccessKey,
        S3_FORCE_PATH_STYLE: "true",
      }
    : {};

  if (build) {
    log("building the portal…");
    await run("npm", ["run", "build", "-w", "web", "--silent"]);
    await run(process.execPath, ["cli/bin/build.mjs"]); // the seed's scans start quicker from the bundle
    // The self-contained CLI tarball the tokens page offers for `npm install -g` (cli/pack).
    await run(process.execPath, ["scripts/pack-cli.mjs"]);
  }
  if (stopping) return;

  // Its own process group (Ctrl-C is ours to pass on, after the server has finished), and SIGTERM
  // should this supervisor die without stopping it.
  server = spawn("setpriv", ["--pdeathsig", "SIGTERM", process.execPath, "--import", "tsx", path.join(projectRoot, "server/src/main.ts")], {
    cwd: projectRoot,
    stdio: ["ignore", "inherit", "inherit"],
    detached: true,
    env: {
      ...process.env,
      DATABASE_URL: cluster.url("tidemark"),
      HOST: host,
      PORT: String(port),
      SMTP_URL: smtp.url,
      DATA_DIR: dataDir,
      DEMO_PASSWORD: demoPassword,
      ...objectStoreEnv,
    },
  });
  log(`server pid ${server.pid}`);
  server.once("exit", (code, signal) => {
    if (!stopping) void stopAll(code || 1, `the server exited unexpectedly (${describeExit(code, signal)}); stopping the mail catcher and PostgreSQL`);
  });

  const url = `http://${host}:${port}`;
  await waitForHealth(url);
  console.log(
    [
      "",
      `Tidemark is running at ${url}`,
      "",
      "Demo accounts (password: " + demoPassword + "):",
      "  admin@harbourside.test       administrator",
      "  supervisor@harbourside.test  supervisor",
      "  technician@harbourside.test  technician",
      "  auditor@harbourside.test     auditor",
      "",
      "Press Ctrl-C to stop the server and its PostgreSQL.",
      "",
    ].join("\n"),
  );
}

async function waitForHealth(url: string): Promise<void> {
  for (let i = 0; i < 240; i++) {
    if (stopping) await stopping;
    try {
      const res = await fetch(`${url}/api/health`);
      if (res.ok) return;
    } catch {
      /* not listening yet */
    }
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error(`the server did not answer ${url}/api/health within 2 minutes`);
}

main().catch(async (e: unknown) => {
  await stopAll(1, `start-up failed: ${e instanceof Error ? e.message : String(e)}`);
});
