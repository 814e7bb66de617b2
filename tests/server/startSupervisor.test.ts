/**
 * `npm start` as a supervisor (issue #19 item 7), as processes: the real scripts/stack.ts on free loopback
 * ports with a temporary data folder (no portal build, no demo seed).
 * - the server killed outright: the mail catcher and PostgreSQL stop within 10 s, and the command exits
 *   non-zero saying why, leaving no postgres behind;
 * - Ctrl-C at a terminal (SIGINT to the whole foreground process group): PostgreSQL and the server are in
 *   process groups of their own, so only the supervisor hears it; it stops the server first (which finishes
 *   on SIGTERM) and PostgreSQL after;
 * - `--s3`: the server's object store is s3rver on loopback with its files in the data folder (the start-up
 *   orphan sweep lists and deletes there), stopped after the server.
 */
import { ListObjectsV2Command, PutObjectCommand, S3Client } from "@aws-sdk/client-s3";
import { spawn, type ChildProcess } from "node:child_process";
import { randomUUID } from "node:crypto";
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, utimesSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import { findPgBinaries, freePort } from "../../scripts/lib/postgres.ts";
import { projectRoot } from "../../scripts/lib/paths.ts";
import { S3_FAKE_CREDENTIALS, startS3Fake } from "../../scripts/lib/s3Fake.ts";

const STOP_LIMIT_MS = 10_000;

interface Stack {
  child: ChildProcess;
  dir: string;
  url: string;
  output(): string;
  exit: Promise<{ code: number | null; signal: NodeJS.Signals | null; at: number }>;
  serverPid: number;
  postgresPid: number;
}

const started: Stack[] = [];

const isAlive = (pid: number): boolean => {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === "EPERM";
  }
};

/** Field 5 of /proc/<pid>/stat: the process group. */
function processGroup(pid: number): number {
  const stat = readFileSync(`/proc/${pid}/stat`, "utf8");
  return Number(stat.slice(stat.lastIndexOf(")") + 2).split(" ")[2]);
}

/** Processes whose command line mentions the folder (a postgres of this data dir). */
function processesUsing(dir: string): number[] {
  return readdirSync("/proc")
    .filter((name) => /^\d+$/.test(name))
    .filter((pid) => {
      try {
        return readFileSync(`/proc/${pid}/cmdline`, "utf8").includes(dir);
      } catch {
        return false;
      }
    })
    .map(Number);
}

async function waitFor<T>(what: string, probe: () => T | null | Promise<T | null>, ms: number, output: () => string): Promise<T> {
  const until = Date.now() + ms;
  for (;;) {
    const value = await probe();
    if (value !== null) return value;
    if (Date.now() > until) throw new Error(`${what} did not happen within ${ms} ms; output:\n${output()}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

const newDataDir = (): string => mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "stack-"));

async function startStack(args: string[] = [], dir = newDataDir()): Promise<Stack> {
  const port = await freePort();
  const child = spawn(process.execPath, ["--import", "tsx", path.join(projectRoot, "scripts/stack.ts"), "--no-build", ...args], {
    cwd: projectRoot,
    // Its own group, as a shell gives a foreground job: a "Ctrl-C" below goes to the whole group.
    detached: true,
    stdio: ["ignore", "pipe", "pipe"],
    env: { ...process.env, DATA_DIR: dir, HOST: "127.0.0.1", PORT: String(port), TIDEMARK_PG_PORT: String(await freePort()), DEMO_SEED: "0", NODE_ENV: "test" },
  });
  let text = "";
  const keep = (c: Buffer): void => {
    text += c.toString();
  };
  child.stdout!.on("data", keep);
  child.stderr!.on("data", keep);
  const exit = new Promise<{ code: number | null; signal: NodeJS.Signals | null; at: number }>((resolve) =>
    child.once("exit", (code, signal) => resolve({ code, signal, at: Date.now() })),
  );
  const output = () => text;
  const stack: Partial<Stack> = { child, dir, url: `http://127.0.0.1:${port}`, output, exit };
  started.push(stack as Stack);
  const pid = (re: RegExp) => {
    const m = re.exec(text);
    return m ? Number(m[1]) : null;
  };
  stack.postgresPid = await waitFor("PostgreSQL start", () => pid(/\[start\] PostgreSQL pid (\d+)/), 60_000, output);
  stack.serverPid = await waitFor("server spawn", () => pid(/\[start\] server pid (\d+)/), 60_000, output);
  await waitFor("server health", () => fetch(`${stack.url}/api/health`).then((r) => (r.ok ? true : null), () => null), 90_000, output);
  return stack as Stack;
}

afterEach(async () => {
  // Whatever a failed test left: the supervisor's group, then its detached children.
  for (const s of started.splice(0)) {
    for (const pid of [s.child.pid!, s.serverPid, s.postgresPid]) {
      if (pid && isAlive(pid)) {
        try {
          process.kill(-pid, "SIGKILL");
        } catch {
          /* not a group leader or gone */
        }
        try {
          process.kill(pid, "SIGKILL");
        } catch {
          /* gone */
        }
      }
    }
    if (existsSync(s.dir)) rmSync(s.dir, { recursive: true, force: true });
  }
});

describe.runIf(findPgBinaries() !== null)("npm start supervises its children", () => {
  it("stops PostgreSQL and the mail catcher within 10 s when the server is killed, and exits non-zero saying why", async () => {
    const stack = await startStack();
    const killedAt = Date.now();
    process.kill(stack.serverPid, "SIGKILL");
    const { code, at } = await Promise.race([
      stack.exit,
      new Promise<never>((_, reject) => setTimeout(() => reject(new Error(`supervisor still running after 20 s:\n${stack.output()}`)), 20_000)),
    ]);
    expect(code, stack.output()).not.toBe(0);
    expect(at - killedAt).toBeLessThan(STOP_LIMIT_MS);
    expect(stack.output()).toContain("the server exited unexpectedly (killed by SIGKILL); stopping the mail catcher and PostgreSQL");
    expect(isAlive(stack.postgresPid)).toBe(false);
    expect(processesUsing(stack.dir)).toEqual([]);
  }, 150_000);

  it("keeps PostgreSQL and the server out of the terminal's process group; Ctrl-C stops the server first, then PostgreSQL", async () => {
    const stack = await startStack();
    const supervisorGroup = processGroup(stack.child.pid!);
    expect(processGroup(stack.postgresPid)).toBe(stack.postgresPid);
    expect(processGroup(stack.serverPid)).toBe(stack.serverPid);
    expect(processGroup(stack.postgresPid)).not.toBe(supervisorGroup);
    expect(processGroup(stack.serverPid)).not.toBe(supervisorGroup);

    // What a terminal does on Ctrl-C: SIGINT to every process of the foreground group.
    process.kill(-stack.child.pid!, "SIGINT");
    const { code } = await Promise.race([
      stack.exit,
      new Promise<never>((_, reject) => setTimeout(() => reject(new Error(`supervisor still running after 30 s:\n${stack.output()}`)), 30_000)),
    ]);
    const out = stack.output();
    expect(code, out).toBe(0);
    // The server heard SIGTERM from the supervisor (not the terminal's SIGINT) and finished before PostgreSQL went.
    expect(out).toContain("SIGTERM: finishing open requests, then stopping");
    expect(out).not.toContain("SIGINT: finishing open requests");
    const order = ["[start] SIGINT: stopping", "[start] stopping the server", "SIGTERM: finishing open requests", "[start] stopping the mail catcher", "[start] stopping PostgreSQL", "[start] stopped"].map((line) => out.indexOf(line));
    expect(order.every((at) => at >= 0), out).toBe(true);
    expect([...order].sort((a, b) => a - b)).toEqual(order);
    expect(isAlive(stack.postgresPid)).toBe(false);
    expect(processesUsing(stack.dir)).toEqual([]);
  }, 150_000);

  it("with --s3 keeps the server's objects in s3rver under the data folder, and stops it after the server", async () => {
    const dir = newDataDir();
    // Before the stack: an object no batch references, left (as by a crash) two hours ago, and a fresh one.
    const seeding = await startS3Fake({ dir: path.join(dir, "s3"), bucket: "tidemark" });
    const client = (endpoint: string) => new S3Client({ region: "us-east-1", endpoint, forcePathStyle: true, credentials: S3_FAKE_CREDENTIALS });
    const [staleId, freshId] = [randomUUID(), randomUUID()];
    const seeder = client(seeding.endpoint);
    for (const id of [staleId, freshId]) await seeder.send(new PutObjectCommand({ Bucket: "tidemark", Key: `images/${id}/0-spectrogram.png`, Body: "png", ContentType: "image/png" }));
    seeder.destroy();
    await seeding.close();
    // s3rver dates an object by its file's mtime (its lib/stores/filesystem.js): age one past the sweep's one-hour cut-off.
    const twoHoursAgo = new Date(Date.now() - 2 * 3600_000);
    utimesSync(path.join(dir, "s3", "tidemark", "images", staleId, "0-spectrogram.png._S3rver_object"), twoHoursAgo, twoHoursAgo);

    const stack = await startStack(["--s3"], dir);
    const announced = /\[start\] S3 service \(s3rver, pid (\d+)\) on (http:\/\/127\.0\.0\.1:\d+), bucket "tidemark"/.exec(stack.output());
    expect(announced, stack.output()).not.toBeNull();
    const [s3Pid, endpoint] = [Number(announced![1]), announced![2]];
    // The server's start-up sweep listed the bucket and deleted the stale orphan through the S3 driver.
    expect(stack.output()).toContain("orphan sweep: removed 1 unreferenced object(s) of 2");
    const reader = client(endpoint);
    const listed = await reader.send(new ListObjectsV2Command({ Bucket: "tidemark", Prefix: "images/" }));
    reader.destroy();
    expect((listed.Contents ?? []).map((o) => o.Key)).toEqual([`images/${freshId}/0-spectrogram.png`]);
    expect(existsSync(path.join(dir, "objects"))).toBe(false);

    process.kill(-stack.child.pid!, "SIGINT");
    const { code } = await Promise.race([
      stack.exit,
      new Promise<never>((_, reject) => setTimeout(() => reject(new Error(`supervisor still running after 30 s:\n${stack.output()}`)), 30_000)),
    ]);
    const out = stack.output();
    expect(code, out).toBe(0);
    const order = ["[start] stopping the server", "[start] stopping the S3 service", "[start] stopping PostgreSQL", "[start] stopped"].map((line) => out.indexOf(line));
    expect(order.every((at) => at >= 0), out).toBe(true);
    expect([...order].sort((a, b) => a - b)).toEqual(order);
    expect(isAlive(s3Pid)).toBe(false);
    expect(processesUsing(stack.dir)).toEqual([]);
  }, 150_000);
});
