/** Runs the real tidemark CLI as a child process (the demo seed scans and uploads with it). */
import { spawn } from "node:child_process";
import path from "node:path";
import { projectRoot } from "../paths.ts";

export const CLI_ENTRY = path.join(projectRoot, "cli", "bin", "tidemark.js");

export interface CliRun {
  code: number | null;
  stdout: string;
  stderr: string;
}

export function runCli(args: string[], env: NodeJS.ProcessEnv, timeoutMs = 10 * 60_000): Promise<CliRun> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [CLI_ENTRY, ...args], { cwd: projectRoot, env, stdio: ["ignore", "pipe", "pipe"] });
    let stdout = "";
    let stderr = "";
    child.stdout.on("data", (c: Buffer) => (stdout = (stdout + c.toString()).slice(-20_000)));
    child.stderr.on("data", (c: Buffer) => (stderr = (stderr + c.toString()).slice(-20_000)));
    const timer = setTimeout(() => child.kill("SIGTERM"), timeoutMs);
    child.on("error", (e) => {
      clearTimeout(timer);
      reject(e);
    });
    child.on("close", (code) => {
      clearTimeout(timer);
      resolve({ code, stdout, stderr });
    });
  });
}
