/** A `tidemark worker` process of the real binary against a test server, its output collected. */
import { spawn, type ChildProcess } from "node:child_process";
import { binPath, isolatedEnv } from "../../cli/runCli.ts";

export interface WorkerProcess {
  child: ChildProcess;
  /** Everything it wrote to stdout and stderr so far. */
  output: () => string;
  exit: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
}

export interface WorkerSpawn {
  serverUrl: string;
  token: string;
  name: string;
  extraArgs?: string[];
  extraEnv?: Record<string, string>;
  /** Every process started goes here, so the test can kill the ones left at the end. */
  children: ChildProcess[];
}

export function startWorkerProcess(o: WorkerSpawn): WorkerProcess {
  const env: NodeJS.ProcessEnv = { ...process.env, ...isolatedEnv({ TIDEMARK_TOKEN: o.token, ...o.extraEnv }) };
  // The worker finds the server by URL only, never the test database.
  delete env.DATABASE_URL;
  delete env.TIDEMARK_TEST_PG_URL;
  const child = spawn(process.execPath, [binPath, "worker", "--server", o.serverUrl, "--name", o.name, "--poll", "0.3", ...(o.extraArgs ?? [])], {
    env,
    stdio: ["ignore", "pipe", "pipe"],
  });
  o.children.push(child);
  let output = "";
  child.stdout!.on("data", (c: Buffer) => void (output += c.toString()));
  child.stderr!.on("data", (c: Buffer) => void (output += c.toString()));
  const exit = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => child.once("exit", (code, signal) => resolve({ code, signal })));
  return { child, output: () => output, exit };
}
