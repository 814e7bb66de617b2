/** The real server (server/src/main.ts) as a child process, for tests that kill it. */
import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";
import { freePort } from "../../../scripts/lib/postgres.ts";
import { projectRoot } from "../../../scripts/lib/paths.ts";

export interface ChildServer {
  url: string;
  process: ChildProcess;
  output(): string;
  kill(signal: NodeJS.Signals): Promise<void>;
}

export async function startChildServer(env: Record<string, string>, timeoutMs = 30_000): Promise<ChildServer> {
  const port = await freePort();
  const child = spawn(process.execPath, ["--import", "tsx", path.join(projectRoot, "server/src/main.ts")], {
    cwd: projectRoot,
    env: { ...process.env, HOST: "127.0.0.1", PORT: String(port), DEMO_SEED: "0", NODE_ENV: "test", ...env },
    stdio: ["ignore", "pipe", "pipe"],
  });
  let output = "";
  const keep = (c: Buffer): void => {
    output = (output + c.toString()).slice(-20_000);
  };
  child.stdout!.on("data", keep);
  child.stderr!.on("data", keep);
  const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
  const url = `http://127.0.0.1:${port}`;
  const until = Date.now() + timeoutMs;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`server exited during start-up (${child.exitCode}):\n${output}`);
    const up = await fetch(`${url}/api/health`).then((r) => r.status === 200, () => false);
    if (up) break;
    if (Date.now() > until) {
      child.kill("SIGKILL");
      throw new Error(`server did not answer within ${timeoutMs} ms:\n${output}`);
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  return {
    url,
    process: child,
    output: () => output,
    async kill(signal) {
      if (child.exitCode === null && child.signalCode === null) child.kill(signal);
      await exited;
    },
  };
}
