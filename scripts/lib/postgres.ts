/**
 * A private PostgreSQL cluster on loopback, for `npm start` (kept in .data/pg) and `npm test`
 * (throwaway, in the temp dir). initdb and postgres refuse to run as root, and CI runs as root,
 * so as root they run under a system user; the server process gets PR_SET_PDEATHSIG so it shuts
 * down (fast) even when the process that started it is killed with SIGKILL.
 */
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync, chmodSync } from "node:fs";
import { createServer } from "node:net";
import path from "node:path";
import pg from "pg";
import { ensureDebianPackages } from "./debian.ts";

export const PG_SYSTEM_USER = "tidemark-pg";

export interface PgBinaries {
  initdb: string;
  postgres: string;
  version: number;
}

const isRoot = (): boolean => typeof process.getuid === "function" && process.getuid() === 0;

/** Finds initdb/postgres, preferring Debian's versioned layout (/usr/lib/postgresql/N/bin). */
export function findPgBinaries(): PgBinaries | null {
  const root = "/usr/lib/postgresql";
  if (existsSync(root)) {
    const versions = readdirSync(root)
      .map(Number)
      .filter((v) => Number.isFinite(v))
      .sort((a, b) => b - a);
    for (const v of versions) {
      const bin = path.join(root, String(v), "bin");
      if (existsSync(path.join(bin, "initdb")) && existsSync(path.join(bin, "postgres"))) {
        return { initdb: path.join(bin, "initdb"), postgres: path.join(bin, "postgres"), version: v };
      }
    }
  }
  const which = spawnSync("sh", ["-c", "command -v initdb"], { encoding: "utf8" });
  const initdb = which.stdout.trim();
  if (which.status === 0 && initdb) {
    const postgres = path.join(path.dirname(initdb), "postgres");
    if (existsSync(postgres)) return { initdb, postgres, version: 0 };
  }
  return null;
}

/** Installs Debian's PostgreSQL when missing, without letting the package create/start its own cluster. */
export function ensurePostgresInstalled(log: (line: string) => void): PgBinaries {
  const found = findPgBinaries();
  if (found) return found;
  log("PostgreSQL not found: installing it from Debian (apt-get install postgresql)…");
  // postgresql-common reads this before creating its default "main" cluster; we manage our own.
  mkdirSync("/etc/postgresql-common", { recursive: true });
  const conf = "/etc/postgresql-common/createcluster.conf";
  if (!existsSync(conf)) writeFileSync(conf, "create_main_cluster = false\n");
  ensureDebianPackages(["postgresql"], log);
  const after = findPgBinaries();
  if (!after) throw new Error("PostgreSQL was installed but initdb/postgres were not found in /usr/lib/postgresql/*/bin");
  return after;
}

function ensureSystemUser(): { uid: number; gid: number } {
  const probe = spawnSync("id", ["-u", PG_SYSTEM_USER], { encoding: "utf8" });
  if (probe.status !== 0) {
    const made = spawnSync("useradd", ["--system", "--no-create-home", "--shell", "/usr/sbin/nologin", PG_SYSTEM_USER], {
      encoding: "utf8",
    });
    if (made.status !== 0) throw new Error(`could not create system user ${PG_SYSTEM_USER}: ${made.stderr.trim()}`);
  }
  const uid = Number(spawnSync("id", ["-u", PG_SYSTEM_USER], { encoding: "utf8" }).stdout.trim());
  const gid = Number(spawnSync("id", ["-g", PG_SYSTEM_USER], { encoding: "utf8" }).stdout.trim());
  return { uid, gid };
}

/** The unprivileged user must be able to reach the data dir: give ancestors o+x where it is missing. */
function ensureTraversable(dir: string): void {
  let at = path.dirname(path.resolve(dir));
  while (at !== path.dirname(at)) {
    const mode = statSync(at).mode;
    if ((mode & 0o001) === 0) chmodSync(at, mode | 0o001);
    at = path.dirname(at);
  }
}

function chownRecursive(dir: string, uid: number, gid: number): void {
  const r = spawnSync("chown", ["-R", `${uid}:${gid}`, dir], { encoding: "utf8" });
  if (r.status !== 0) throw new Error(`chown ${dir} failed: ${r.stderr.trim()}`);
}

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.unref();
    srv.on("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const addr = srv.address();
      const port = typeof addr === "object" && addr ? addr.port : 0;
      srv.close(() => resolve(port));
    });
  });
}

export interface ClusterOptions {
  dataDir: string;
  port: number;
  /** Throwaway clusters trade durability for speed (fsync off). */
  throwaway?: boolean;
  /**
   * Run in a process group of its own, so a Ctrl-C at the terminal reaches only our supervisor, which
   * stops PostgreSQL when it is ready to (npm start). The parent-death signal still applies.
   */
  detached?: boolean;
  log?: (line: string) => void;
}

export interface RunningCluster {
  port: number;
  dataDir: string;
  /** Superuser connection URL for a database name (default "postgres"). */
  url(database?: string): string;
  createDatabase(name: string): Promise<void>;
  /** Smart shutdown (sessions finish), fast after 3 s; `fast` skips straight to disconnecting clients. */
  stop(options?: { fast?: boolean }): Promise<void>;
  process: ChildProcess;
}

function initCluster(bins: PgBinaries, dataDir: string, owner: { uid: number; gid: number } | null): void {
  mkdirSync(dataDir, { recursive: true, mode: 0o700 });
  if (owner) {
    ensureTraversable(dataDir);
    chownRecursive(dataDir, owner.uid, owner.gid);
  }
  const args = ["-D", dataDir, "-U", "postgres", "--auth=trust", "-E", "UTF8", "--locale=C.UTF-8", "--no-instructions"];
  const r = owner
    ? spawnSync("runuser", ["-u", PG_SYSTEM_USER, "--", bins.initdb, ...args], { encoding: "utf8" })
    : spawnSync(bins.initdb, args, { encoding: "utf8" });
  if (r.status !== 0) throw new Error(`initdb failed (${r.status}): ${(r.stderr || r.stdout).trim()}`);
}

async function waitUntilReady(url: string, child: ChildProcess, output: () => string, timeoutMs = 30_000): Promise<void> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    if (child.exitCode !== null || child.signalCode !== null) {
      throw new Error(`postgres exited during start-up (${child.exitCode ?? child.signalCode}):\n${output()}`);
    }
    const client = new pg.Client({ connectionString: url, connectionTimeoutMillis: 1000 });
    try {
      await client.connect();
      await client.query("select 1");
      await client.end();
      return;
    } catch {
      await client.end().catch(() => undefined);
      if (Date.now() > until) throw new Error(`postgres did not accept connections within ${timeoutMs} ms:\n${output()}`);
      await new Promise((r) => setTimeout(r, 150));
    }
  }
}

/** Initialises the cluster if needed, starts it on 127.0.0.1:port and waits until it answers. */
export async function startCluster(bins: PgBinaries, options: ClusterOptions): Promise<RunningCluster> {
  const { dataDir, port } = options;
  const owner = isRoot() ? ensureSystemUser() : null;
  if (!existsSync(path.join(dataDir, "PG_VERSION"))) initCluster(bins, dataDir, owner);
  else if (owner) chownRecursive(dataDir, owner.uid, owner.gid);

  const settings = [
    "-D", dataDir,
    "-p", String(port),
    "-c", "listen_addresses=127.0.0.1",
    // No Unix socket: the default /var/run/postgresql is not ours, and loopback TCP is all we use.
    "-c", "unix_socket_directories=",
    "-c", "max_connections=200",
    ...(options.throwaway ? ["-c", "fsync=off", "-c", "synchronous_commit=off", "-c", "full_page_writes=off"] : []),
  ];
  // setpriv applies --pdeathsig after changing credentials, so the death signal survives the uid switch.
  const cmd = "setpriv";
  const args = owner
    ? ["--reuid", String(owner.uid), "--regid", String(owner.gid), "--clear-groups", "--pdeathsig", "SIGINT", bins.postgres, ...settings]
    : ["--pdeathsig", "SIGINT", bins.postgres, ...settings];
  const child = spawn(cmd, args, { stdio: ["ignore", "pipe", "pipe"], detached: options.detached ?? false });
  let output = "";
  const keep = (chunk: Buffer): void => {
    output = (output + chunk.toString()).slice(-8000);
  };
  child.stdout?.on("data", keep);
  child.stderr?.on("data", keep);

  const url = (database = "postgres"): string => `postgres://postgres@127.0.0.1:${port}/${database}`;
  await waitUntilReady(url(), child, () => output);
  options.log?.(`PostgreSQL ${bins.version || ""} running on 127.0.0.1:${port} (data: ${dataDir})`);

  const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
  return {
    port,
    dataDir,
    process: child,
    url,
    async createDatabase(name: string) {
      const client = new pg.Client({ connectionString: url() });
      await client.connect();
      try {
        const found = await client.query("select 1 from pg_database where datname = $1", [name]);
        if (found.rowCount === 0) await client.query(`create database "${name.replace(/"/g, '""')}"`);
      } finally {
        await client.end();
      }
    },
    async stop(options = {}) {
      if (child.exitCode !== null || child.signalCode !== null) return;
      child.kill(options.fast ? "SIGINT" : "SIGTERM"); // SIGTERM: smart shutdown, lets sessions finish
      const fastTimer = setTimeout(() => child.kill("SIGINT"), 3000); // fast shutdown: disconnects clients
      const kill = setTimeout(() => child.kill("SIGKILL"), 15000);
      await exited;
      clearTimeout(fastTimer);
      clearTimeout(kill);
    },
  };
}

/** Marks a throwaway cluster dir with the pid of the process that owns it. */
export function claimThrowawayDir(dir: string): void {
  mkdirSync(dir, { recursive: true });
  writeFileSync(path.join(dir, "owner.pid"), String(process.pid));
}

const isAlive = (pid: number): boolean => {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === "EPERM";
  }
};

/** Removes throwaway clusters left by runs that were killed (their owner process is gone). */
export function sweepStaleThrowawayDirs(parent: string, prefix: string, log: (line: string) => void): void {
  if (!existsSync(parent)) return;
  for (const name of readdirSync(parent)) {
    if (!name.startsWith(prefix)) continue;
    const dir = path.join(parent, name);
    const ownerFile = path.join(dir, "owner.pid");
    const owner = existsSync(ownerFile) ? Number(readFileSync(ownerFile, "utf8")) : NaN;
    if (Number.isFinite(owner) && isAlive(owner)) continue;
    const pidFile = path.join(dir, "pg", "postmaster.pid");
    if (existsSync(pidFile)) {
      const pgPid = Number(readFileSync(pidFile, "utf8").split("\n")[0]);
      if (Number.isFinite(pgPid) && pgPid > 0 && isAlive(pgPid)) {
        try {
          process.kill(pgPid, "SIGKILL");
        } catch {
          /* already gone */
        }
      }
    }
    rmSync(dir, { recursive: true, force: true });
    log(`removed stale test cluster ${dir}`);
  }
}
