/**
 * The self-contained CLI package (`npm run pack:cli`) as a studio workstation gets it: downloaded from the
 * server the portal names, installed with `npm install -g` into an empty prefix, then scan, verify and
 * upload run with it against that server (real PostgreSQL, loopback). The tarball's contents are read by
 * `tar` (GNU tar): no tsx, no TypeScript, no node_modules inside.
 */
import { execFileSync } from "node:child_process";
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import type { Server } from "node:http";
import type { AddressInfo } from "node:net";
import path from "node:path";
import { execa } from "execa";
import { afterAll, beforeAll, expect, it } from "vitest";
import { Batch } from "../../server/src/models/index.ts";
import { repoRoot } from "../cli/runCli.ts";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

let t: TestApp;
let server: Server;
let url: string;
let token: string;
let dir: string;
let packDir: string;
let tidemark: string;

beforeAll(async () => {
  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? "/tmp", "packed-cli-"));
  packDir = path.join(dir, "pack");
  execFileSync(process.execPath, [path.join(repoRoot, "scripts", "pack-cli.mjs"), "--out", packDir], { cwd: repoRoot, stdio: "pipe" });
  t = await startTestApp({ label: "packedcli", settings: { cliPackageDir: packDir } });
  token = await t.tokenFor(await t.createUser("technician"));
  server = t.app.listen(0, "127.0.0.1");
  await new Promise((resolve) => server.once("listening", resolve));
  url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
}, 180_000);

afterAll(async () => {
  await new Promise((resolve) => server?.close(resolve));
  rmSync(dir, { recursive: true, force: true });
  await t?.close();
});

it("holds only the bundle, its launcher and a manifest whose only dependencies are Skia and the font files", () => {
  const [tarball] = execFileSync("ls", [packDir], { encoding: "utf8" }).trim().split("\n");
  expect(tarball).toMatch(/^tidemark-\d+\.\d+\.\d+\.tgz$/);
  const listing = execFileSync("tar", ["-tzf", path.join(packDir, tarball)], { encoding: "utf8" }).trim().split("\n");
  expect(listing).toContain("package/bin/tidemark.js");
  expect(listing).toContain("package/bin/runBundle.mjs");
  expect(listing).toContain("package/dist/bin.cjs");
  expect(listing.some((f) => f.includes("node_modules") || f.endsWith(".ts"))).toBe(false);
  const manifest = JSON.parse(execFileSync("tar", ["-xzOf", path.join(packDir, tarball), "package/package.json"], { encoding: "utf8" })) as Record<string, unknown>;
  // What a bundle cannot hold: the native Skia binary (npm picks the machine's) and the font files.
  expect(Object.keys(manifest.dependencies as object).sort()).toEqual(["@fontsource/source-sans-3", "@napi-rs/canvas"]);
  expect(manifest.bin).toEqual({ tidemark: "bin/tidemark.js" });
});

it("is offered by the server with a one-line install command, and installs from it into an empty prefix", async () => {
  const described = await fetch(`${url}/api/cli-package`, { headers: { authorization: `Bearer ${token}` } });
  expect(described.status).toBe(200);
  const pkg = (await described.json()) as { installCommand: string; url: string; version: string };
  expect(pkg.installCommand).toBe(`npm install -g ${pkg.url}`);
  expect(pkg.url.endsWith("/downloads/tidemark.tgz")).toBe(true);

  const prefix = path.join(dir, "prefix");
  mkdirSync(prefix);
  const install = await execa("npm", ["install", "-g", "--prefix", prefix, "--no-audit", "--no-fund", `${url}/downloads/tidemark.tgz`], { reject: false, env: { npm_config_cache: path.join(dir, "npm-cache") } });
  expect(install.exitCode, install.stderr).toBe(0);
  tidemark = path.join(prefix, "bin", "tidemark");
  const version = await execa(tidemark, ["--version"], { reject: false });
  expect(version.stdout.trim()).toBe(pkg.version);
}, 120_000);

it("scans, verifies and uploads with the installed command against the server", async () => {
  const work = path.join(dir, "transfers");
  mkdirSync(path.join(work, "day-1"), { recursive: true });
  for (const [i, hz] of [440, 997].entries()) {
    writeFileSync(path.join(work, "day-1", `reel-${i}.wav`), encodeWav([sine({ frequencyHz: hz, sampleRateHz: 48000, seconds: 1, peakDbfs: -12 })], { sampleRateHz: 48000, bitDepth: 24 }));
  }
  const env = { TIDEMARK_CONFIG_DIR: path.join(dir, "config"), TIDEMARK_SPOOL_DIR: path.join(dir, "spool"), TIDEMARK_TOKEN: token, PATH: process.env.PATH ?? "" };
  const scan = await execa(tidemark, ["scan", "day-1", "-w", "2", "-q", "--out", "report.json", "--upload", "--server", url, "--collection", "Ferry Terminal Interviews 1978"], { cwd: work, env, extendEnv: false, reject: false });
  expect(scan.exitCode, scan.stderr).toBe(0);
  const report = JSON.parse(readFileSync(path.join(work, "report.json"), "utf8")) as { files: { path: string; verdict: string }[] };
  expect(report.files.map((f) => [f.path, f.verdict])).toEqual([["reel-0.wav", "pass"], ["reel-1.wav", "pass"]]);
  expect(await Batch.count()).toBe(1);

  const verify = await execa(tidemark, ["verify", "day-1", "--against", "report.json"], { cwd: work, env, extendEnv: false, reject: false });
  expect(verify.exitCode, verify.stderr).toBe(0);
  expect(verify.stdout).toContain("2 unchanged, 0 changed");

  const upload = await execa(tidemark, ["upload", "report.json", "--server", url, "--collection", "Lighthouse Choir Reels"], { cwd: work, env, extendEnv: false, reject: false });
  expect(upload.exitCode, upload.stderr).toBe(0);
  expect(await Batch.count()).toBe(2);
}, 120_000);
