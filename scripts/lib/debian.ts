/** Installs missing Debian packages non-interactively (as root, or through passwordless sudo). */
import { spawnSync } from "node:child_process";

const isRoot = (): boolean => typeof process.getuid === "function" && process.getuid() === 0;

export function hasCommand(cmd: string): boolean {
  return spawnSync("sh", ["-c", `command -v ${cmd}`], { stdio: "ignore" }).status === 0;
}

let updated = false;

export function ensureDebianPackages(packages: string[], log: (line: string) => void): void {
  if (packages.length === 0) return;
  if (!hasCommand("apt-get")) throw new Error(`missing ${packages.join(", ")} and no apt-get to install them`);
  const prefix = isRoot() ? [] : hasCommand("sudo") ? ["sudo", "-n"] : null;
  if (!prefix) throw new Error(`missing ${packages.join(", ")}: run as root or install them with apt-get`);
  const run = (args: string[]): void => {
    const [cmd, ...rest] = [...prefix, ...args];
    const r = spawnSync(cmd, rest, {
      stdio: ["ignore", "inherit", "inherit"],
      env: { ...process.env, DEBIAN_FRONTEND: "noninteractive" },
    });
    if (r.status !== 0) throw new Error(`${args.join(" ")} failed with exit code ${r.status}`);
  };
  log(`installing from Debian: ${packages.join(" ")}`);
  if (!updated) {
    run(["apt-get", "update", "-q"]);
    updated = true;
  }
  run(["apt-get", "install", "-y", "-q", "--no-install-recommends", "-o", "Dpkg::Options::=--force-confold", ...packages]);
}
