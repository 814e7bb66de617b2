/** Runs the real `tidemark` binary (cli/bin/tidemark.js) with execa, isolated from the user's config and spool. */
import { mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { execa, type ResultPromise } from "execa";

export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");
export const binPath = path.join(repoRoot, "cli", "bin", "tidemark.js");

export interface CliRun {
  exitCode: number;
  stdout: string;
  stderr: string;
}

/** A private config and spool folder per test file, so nothing touches ~/.config or ~/.local. */
export function isolatedEnv(extra: Record<string, string> = {}): Record<string, string> {
  const home = mkdtempSync(path.join(tmpdir(), "tidemark-home-"));
  return {
    TIDEMARK_CONFIG_DIR: path.join(home, "config"),
    TIDEMARK_SPOOL_DIR: path.join(home, "spool"),
    TIDEMARK_RETRY_BASE_MS: "5",
    TIDEMARK_TOKEN: "",
    ...extra,
  };
}

export function startCli(args: string[], options: { cwd: string; env: Record<string, string>; input?: string }): ResultPromise {
  return execa("node", [binPath, ...args], {
    cwd: options.cwd,
    env: { ...options.env, FORCE_COLOR: "0" },
    reject: false,
    input: options.input,
    stdin: options.input === undefined ? "ignore" : undefined,
  }) as ResultPromise;
}

export async function runCli(args: string[], options: { cwd: string; env: Record<string, string>; input?: string }): Promise<CliRun> {
  const r = await startCli(args, options);
  return { exitCode: r.exitCode ?? -1, stdout: String(r.stdout), stderr: String(r.stderr) };
}

/** A report without what legitimately differs between two runs. */
export function withoutTimestamps(reportJson: string): unknown {
  const report = JSON.parse(reportJson) as Record<string, unknown>;
  delete report.startedAt;
  delete report.finishedAt;
  return report;
}
