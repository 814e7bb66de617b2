// Shared first steps of `npm start` and `npm test`, runnable with nothing but Node and npm.
import { spawn, spawnSync } from "node:child_process";
import { existsSync, statSync } from "node:fs";
import { constants } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";

export const projectRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");

/** Runs `npm ci` when node_modules is missing or older than package-lock.json. */
export function ensureDependencies() {
  const marker = path.join(projectRoot, "node_modules", ".package-lock.json");
  const lock = path.join(projectRoot, "package-lock.json");
  const fresh = existsSync(marker) && statSync(marker).mtimeMs >= statSync(lock).mtimeMs - 1000;
  if (fresh && existsSync(path.join(projectRoot, "node_modules", "tsx"))) return;
  console.error("[tidemark] installing dependencies (npm ci)…");
  const r = spawnSync("npm", ["ci", "--no-audit", "--no-fund"], { cwd: projectRoot, stdio: "inherit" });
  if (r.status !== 0) {
    console.error(`[tidemark] npm ci failed with exit code ${r.status}`);
    process.exit(r.status ?? 1);
  }
}

/** Runs a TypeScript entry point under tsx in a child, forwarding signals and the exit code. */
export function runTs(script, args) {
  const child = spawn(process.execPath, ["--import", "tsx", path.join(projectRoot, script), ...args], {
    cwd: projectRoot,
    stdio: "inherit",
  });
  for (const sig of ["SIGINT", "SIGTERM", "SIGHUP"]) {
    process.on(sig, () => child.kill(sig));
  }
  child.on("exit", (code, signal) => {
    process.exit(signal ? 128 + (constants.signals[signal] ?? 1) : (code ?? 1));
  });
}
