/**
 * `npm start`: PostgreSQL (cluster kept in .data/pg, reused by later starts) on its own loopback port,
 * the local mail catcher (.data/mail), the portal build, and the server — which migrates, and seeds the
 * demo archive on an empty database by really scanning examples/ with the CLI. Ctrl-C / SIGTERM stops
 * the server first, then the mail catcher, then PostgreSQL.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import { startSmtpFake, type SmtpFake } from "../server/src/mail/smtpFake.ts";
import { ensurePostgresInstalled, freePort, startCluster, type RunningCluster } from "./lib/postgres.ts";
import { projectRoot } from "./lib/paths.ts";

const log = (line: string): void => console.error(`[start] ${line}`);
const dataDir = path.join(projectRoot, ".data");
const host = process.env.HOST || "127.0.0.1";
const port = Number(process.env.PORT || 8080);
const demoPassword = process.env.DEMO_PASSWORD || "harbourside-demo";

let cluster: RunningCluster | null = null;
let smtp: SmtpFake | null = null;
let server: ChildProcess | null = null;
let stopping = false;

async function stopAll(code: number): Promise<never> {
  if (!stopping) {
    stopping = true;
    if (server && server.exitCode === null) {
      const exited = new Promise((r) => server?.once("exit", r));
      server.kill("SIGTERM");
      await exited;
    }
    await smtp?.close().catch(() => undefined);
    await cluster?.stop();
    log("stopped");
  }
  process.exit(code);
}

for (const sig of ["SIGINT", "SIGTERM", "SIGHUP"] as const) process.on(sig, () => void stopAll(0));

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
  cluster = await startCluster(bins, { dataDir: path.join(dataDir, "pg"), port: await clusterPort(), log });
  await cluster.createDatabase("tidemark");

  smtp = await startSmtpFake({ dir: path.join(dataDir, "mail") });
  log(`mail catcher on ${smtp.url}; messages are stored in .data/mail`);

  log("building the portal…");
  await run("npm", ["run", "build", "-w", "web", "--silent"]);
  await run(process.execPath, ["cli/bin/build.mjs"]); // the seed's scans start quicker from the bundle
  // The self-contained CLI tarball the tokens page offers for `npm install -g` (cli/pack).
  await run(process.execPath, ["scripts/pack-cli.mjs"]);

  server = spawn(process.execPath, ["--import", "tsx", path.join(projectRoot, "server/src/main.ts")], {
    cwd: projectRoot,
    stdio: "inherit",
    env: {
      ...process.env,
      DATABASE_URL: cluster.url("tidemark"),
      HOST: host,
      PORT: String(port),
      SMTP_URL: smtp.url,
      DEMO_PASSWORD: demoPassword,
    },
  });
  server.on("exit", (code) => {
    if (!stopping) {
      log(`server exited (${code}); stopping`);
      void stopAll(code || 1);
    }
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
    if (stopping) return;
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
  log(e instanceof Error ? e.message : String(e));
  await stopAll(1);
});
