/**
 * The whole test suite, as CI runs it: system packages if missing, a throwaway PostgreSQL cluster on a
 * free loopback port (removed afterwards, even on failure or Ctrl-C), type check and lint, portal build,
 * then every vitest project. Extra arguments go to vitest (`npm test -- tests/shared/loudness.test.ts`).
 */
import { spawn } from "node:child_process";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { ensureDebianPackages, hasCommand } from "./lib/debian.ts";
import {
  claimThrowawayDir,
  ensurePostgresInstalled,
  freePort,
  startCluster,
  sweepStaleThrowawayDirs,
  type RunningCluster,
} from "./lib/postgres.ts";
import { projectRoot } from "./lib/paths.ts";

const log = (line: string): void => console.error(`[test] ${line}`);
const PREFIX = "tidemark-test-";

/** Runs a command in the project root; resolves with its exit code. The child dies with us (pdeathsig). */
function run(cmd: string, args: string[], env: NodeJS.ProcessEnv): Promise<number> {
  return new Promise((resolve) => {
    log(`$ ${cmd} ${args.join(" ")}`);
    const child = spawn("setpriv", ["--pdeathsig", "SIGTERM", cmd, ...args], { cwd: projectRoot, stdio: "inherit", env });
    current = child;
    child.on("exit", (code, signal) => {
      current = null;
      resolve(code ?? (signal ? 1 : 0));
    });
  });
}

let current: ReturnType<typeof spawn> | null = null;
let cluster: RunningCluster | null = null;
let workDir: string | null = null;

async function cleanUp(): Promise<void> {
  if (cluster) {
    await cluster.stop().catch((e: unknown) => log(`stopping PostgreSQL: ${String(e)}`));
    cluster = null;
  }
  if (workDir) {
    rmSync(workDir, { recursive: true, force: true });
    workDir = null;
  }
}

for (const sig of ["SIGINT", "SIGTERM", "SIGHUP"] as const) {
  process.on(sig, () => {
    log(`${sig}: stopping tests and the throwaway cluster`);
    current?.kill("SIGTERM");
    void cleanUp().finally(() => process.exit(130));
  });
}

async function main(): Promise<number> {
  const bins = ensurePostgresInstalled(log);
  const missing = [
    ["chromium", "chromium"],
    ["ffmpeg", "ffmpeg"],
    ["sox", "sox"],
    // Debian's reference FLAC encoder/decoder: makes the FLAC test inputs and is the bench's `flac -t` yardstick.
    ["flac", "flac"],
    ["espeak-ng", "espeak-ng"],
    ["flac", "flac"],
    // PREMIS exports are checked against the PREMIS 3.0 schema, batch PDFs read back as text.
    ["xmllint", "libxml2-utils"],
    ["pdftotext", "poppler-utils"],
  ]
    .filter(([cmd]) => !hasCommand(cmd))
    .map(([, pkg]) => pkg);
  // Fonts so portal screenshots render text; harmless when already there.
  ensureDebianPackages(missing.length ? [...missing, "fonts-dejavu-core"] : [], log);

  sweepStaleThrowawayDirs(tmpdir(), PREFIX, log);
  workDir = mkdtempSync(path.join(tmpdir(), PREFIX));
  claimThrowawayDir(workDir);
  cluster = await startCluster(bins, { dataDir: path.join(workDir, "pg"), port: await freePort(), throwaway: true, log });

  const env: NodeJS.ProcessEnv = {
    ...process.env,
    TIDEMARK_TEST_PG_URL: cluster.url(),
    TIDEMARK_TEST_TMP: workDir,
    NODE_ENV: "test",
  };
  const vitestArgs = process.argv.slice(2);
  const focused = vitestArgs.length > 0;
  const steps: [string, string[]][] = [
    ...(focused ? [] : ([["npx", ["tsc", "-b"]], ["npx", ["eslint", "."]]] as [string, string[]][])),
    ["npm", ["run", "build", "-w", "web", "--silent"]],
    // The CLI bundle makes each of the many `tidemark` processes the tests start ~0.8 s quicker;
    // bin/tidemark.js falls back to the sources whenever one changed after the build.
    ["node", ["cli/bin/build.mjs"]],
    ["npx", ["vitest", "run", ...vitestArgs]],
  ];
  for (const [cmd, args] of steps) {
    const code = await run(cmd, args, env);
    if (code !== 0) {
      log(`failed: ${cmd} ${args.join(" ")} (exit ${code})`);
      return code;
    }
  }
  return 0;
}

main()
  .then(async (code) => {
    await cleanUp();
    process.exit(code);
  })
  .catch(async (e: unknown) => {
    log(e instanceof Error ? e.message : String(e));
    await cleanUp();
    process.exit(1);
  });
