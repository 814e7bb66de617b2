/**
 * commander's node:child_process loaded on first use in the CLI bundle (cli/bin/bundle.mjs,
 * lazyCommanderChildProcess; issue #22): a command that spawns nothing never loads it, and commander's
 * executable subcommands, the one thing it is there for, still spawn. Checked on a bundle built with the
 * plugin from the installed commander, and on the real bundle's `tidemark scan` (of an empty folder).
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import path from "node:path";
import { build } from "esbuild";
import { execa } from "execa";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { bundleCli, lazyCommanderChildProcess } from "../../cli/bin/bundle.mjs";
import { repoRoot } from "./runCli.ts";

const scratchRoot = path.join(repoRoot, "tmp");
let dir: string;
let bundle: string;

// Prints whether node:child_process was loaded after parsing, then runs the command asked for.
const ENTRY = `
const { Command } = require("commander");
const loaded = () => process.moduleLoadList.includes("NativeModule child_process");
const program = new Command("probe").exitOverride();
program.command("plain").action(() => process.stdout.write(JSON.stringify({ plain: true, childProcessLoaded: loaded() })));
program.command("external", "runs a file of its own", { executableFile: process.env.PROBE_EXTERNAL });
program.parse(process.argv);
`;

beforeAll(async () => {
  mkdirSync(scratchRoot, { recursive: true });
  dir = mkdtempSync(path.join(scratchRoot, "lazy-cp-"));
  bundle = path.join(dir, "probe.cjs");
  writeFileSync(path.join(dir, "entry.cjs"), ENTRY);
  // The same esbuild settings that matter here as bundle.mjs's: bundled for Node, CommonJS.
  const result = await build({
    absWorkingDir: repoRoot,
    entryPoints: [path.join(dir, "entry.cjs")],
    outfile: bundle,
    bundle: true,
    platform: "node",
    format: "cjs",
    logLevel: "silent",
    plugins: [lazyCommanderChildProcess],
  });
  // The warning says commander's line was not found: the plugin would then change nothing.
  expect(result.warnings.map((w) => w.text)).toEqual([]);
  writeFileSync(path.join(dir, "external.cjs"), 'process.stdout.write(JSON.stringify({ external: process.argv.slice(2) }));\n');
}, 30_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("commander's child_process, loaded on first use", () => {
  it("is not loaded by a command that spawns nothing", async () => {
    const r = await execa("node", [bundle, "plain"], { reject: false });
    expect(r.exitCode).toBe(0);
    expect(JSON.parse(r.stdout)).toEqual({ plain: true, childProcessLoaded: false });
  });

  it("still runs an executable subcommand (commander's spawn)", async () => {
    const r = await execa("node", [bundle, "external", "a", "b"], { reject: false, env: { PROBE_EXTERNAL: path.join(dir, "external.cjs") } });
    expect(r.exitCode).toBe(0);
    expect(JSON.parse(r.stdout)).toEqual({ external: ["a", "b"] });
  });

  it("is not loaded by the real bundle's scan (cli/bin/bundle.mjs)", async () => {
    // Laid out as cli/ is: the bundle reads ../package.json (its version).
    const outdir = path.join(dir, "cli", "dist");
    mkdirSync(outdir, { recursive: true });
    writeFileSync(path.join(dir, "cli", "package.json"), readFileSync(path.join(repoRoot, "cli", "package.json")));
    await bundleCli({ outdir });
    const probe = path.join(dir, "modules.mjs");
    const runBundle = JSON.stringify(path.join(repoRoot, "cli", "bin", "runBundle.mjs"));
    const bin = JSON.stringify(path.join(outdir, "bin.cjs"));
    writeFileSync(
      probe,
      `import { runBundle } from ${runBundle};\nprocess.on("exit", () => process.stderr.write("MODULES " + JSON.stringify(process.moduleLoadList) + "\\n"));\nprocess.argv.splice(1, 1, ${bin});\nrunBundle(${bin});\n`,
    );
    const input = path.join(dir, "in");
    mkdirSync(input);
    const r = await execa("node", [probe, "scan", input, "--out", path.join(dir, "report.json")], { reject: false, env: { TIDEMARK_CODE_CACHE_DIR: "off" } });
    const modules = JSON.parse(/MODULES (.*)/.exec(r.stderr)?.[1] ?? "null") as string[] | null;
    expect(modules, r.stderr).not.toBeNull();
    // The scan itself ran (an empty folder: no files, exit 0) with the CommonJS bundle...
    expect(r.exitCode, r.stderr).toBe(0);
    expect(modules).toContain("NativeModule crypto");
    // ...and without commander's child_process or what it pulls in.
    expect(modules).not.toContain("NativeModule child_process");
    expect(modules).not.toContain("NativeModule dgram");
  }, 60_000);
});
