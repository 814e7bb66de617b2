/**
 * tidemark.json, `tidemark init` and the exit-code table, with the real binary. The shipped JSON Schema
 * is checked with ajv (npm), an implementation independent of the zod schema it was generated from.
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync, existsSync } from "node:fs";
import { createServer } from "node:net";
import { tmpdir } from "node:os";
import path from "node:path";
import { Ajv2020 } from "ajv/dist/2020.js";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import type { ScanReport } from "../../shared/src/types/report.ts";
import { isolatedEnv, repoRoot, runCli } from "./runCli.ts";

let dir: string;
const env = isolatedEnv();
const rate = 48000;
const tone = (dc = 0) => {
  const x = sine({ frequencyHz: 997, sampleRateHz: rate, seconds: 1, peakDbfs: -12 });
  for (let i = 0; i < x.length; i++) x[i] += dc;
  return encodeWav([x, x], { sampleRateHz: rate, bitDepth: 24 });
};

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-project-"));
  mkdirSync(path.join(dir, "project", "day-1"), { recursive: true });
  writeFileSync(path.join(dir, "project", "day-1", "clean.wav"), tone());
  // 0.5 % of full scale DC: between the profiles' 0.1 % warn and 1 % fail limits.
  writeFileSync(path.join(dir, "project", "day-1", "dc.wav"), tone(0.005));
  mkdirSync(path.join(dir, "broken"), { recursive: true });
  writeFileSync(path.join(dir, "broken", "notes.wav"), "not audio");
  writeFileSync(path.join(dir, "broken", "clean.wav"), tone());
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("tidemark.json", () => {
  it("supplies profile, globs, spectrogram folder and --fail-on from a parent folder; flags win", async () => {
    writeFileSync(
      path.join(dir, "project", "tidemark.json"),
      JSON.stringify({ profile: "broadcast-loudness", include: ["*.wav"], spectrograms: "qc-png", failOn: "warn" }),
    );
    const cwd = path.join(dir, "project", "day-1");
    const r = await runCli(["scan", ".", "--format", "json", "-q", "-w", "1"], { cwd, env });
    const report = JSON.parse(r.stdout) as ScanReport;
    expect(report.profile.name).toBe("broadcast-loudness");
    expect(existsSync(path.join(dir, "project", "qc-png", "clean.wav.png"))).toBe(true);
    // -12 dBFS tones are far from −23 LUFS: every file fails broadcast-loudness.
    expect(r.exitCode).toBe(1);

    const flags = await runCli(["scan", ".", "--format", "json", "-q", "-w", "1", "-p", "access-copy", "--fail-on", "fail"], { cwd, env });
    expect((JSON.parse(flags.stdout) as ScanReport).profile.name).toBe("access-copy");
    // dc.wav only warns: with --fail-on fail that is exit 0 ...
    expect(flags.exitCode).toBe(0);
    // ... and with tidemark.json's failOn "warn" (flag only for the profile) exit 1.
    const warned = await runCli(["scan", ".", "--format", "json", "-q", "-w", "1", "-p", "access-copy"], { cwd, env });
    expect(warned.exitCode).toBe(1);
  });

  it("refuses a broken tidemark.json with exit 2, naming the file and the field", async () => {
    const bad = path.join(dir, "bad");
    mkdirSync(bad, { recursive: true });
    writeFileSync(path.join(bad, "tidemark.json"), JSON.stringify({ profile: 3 }));
    const r = await runCli(["scan", ".", "-q"], { cwd: bad, env });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/tidemark\.json: profile: expected string, received number/);
  });

  it("tidemark init writes a file valid against the shipped JSON Schema, and will not overwrite it without --force", async () => {
    const target = path.join(dir, "init");
    mkdirSync(target, { recursive: true });
    const args = ["init", "-y", "-p", "preservation-master", "--collection", "Lighthouse Choir Reels", "--server", "http://127.0.0.1:9/", "--fail-on", "warn"];
    const r = await runCli(args, { cwd: target, env });
    expect(r.exitCode, r.stderr).toBe(0);
    const written = JSON.parse(readFileSync(path.join(target, "tidemark.json"), "utf8")) as Record<string, unknown>;
    expect(written).toMatchObject({ profile: "preservation-master", collection: "Lighthouse Choir Reels", server: "http://127.0.0.1:9", failOn: "warn" });
    const schema = JSON.parse(readFileSync(path.join(repoRoot, "shared", "schema", "tidemark-config.schema.json"), "utf8")) as object;
    const validate = new Ajv2020({ strict: false }).compile(schema);
    expect(validate(written), JSON.stringify(validate.errors)).toBe(true);
    expect(validate({ profile: "x", colour: "blue" })).toBe(false);

    const again = await runCli(args, { cwd: target, env });
    expect(again.exitCode).toBe(2);
    expect(again.stderr).toMatch(/already exists; add --force/);
    expect((await runCli([...args, "--force"], { cwd: target, env })).exitCode).toBe(0);
  });
});

describe("--progress json", () => {
  it("writes JSON lines on stderr without a terminal, counting bytes up to the batch total, for scan and verify", async () => {
    const noConfig = { ...env, TIDEMARK_NO_CONFIG: "1" };
    const scan = await runCli(["scan", "project/day-1", "--format", "json", "--out", "progress.json", "-w", "1", "-p", "access-copy", "--progress", "json"], { cwd: dir, env: noConfig });
    const events = scan.stderr.trim().split("\n").filter((l) => l.startsWith("{")).map((l) => JSON.parse(l) as Record<string, number | string>);
    const total = ["clean.wav", "dc.wav"].reduce((n, f) => n + readFileSync(path.join(dir, "project", "day-1", f)).length, 0);
    expect(events[0]).toMatchObject({ event: "progress", files: 2, bytes: total });
    expect(events.at(-1)).toMatchObject({ event: "done", filesDone: 2, files: 2, bytesDone: total, bytes: total });
    const verify = await runCli(["verify", "project/day-1", "--against", "progress.json", "--progress", "json"], { cwd: dir, env: noConfig });
    const last = JSON.parse(verify.stderr.trim().split("\n").at(-1)!) as Record<string, unknown>;
    expect(last).toMatchObject({ event: "done", filesDone: 2, bytesDone: total });
    expect(verify.exitCode).toBe(0);
  });
});

describe("exit codes (README's table)", () => {
  it("3 when a file could not be read and none failed", async () => {
    const r = await runCli(["scan", "broken", "--format", "json", "-q", "-w", "1", "-p", "access-copy"], { cwd: dir, env: { ...env, TIDEMARK_NO_CONFIG: "1" } });
    expect(r.exitCode).toBe(3);
  });

  it("4 when scan --upload could only spool the batch, naming the command that sends it later", async () => {
    // A port that was free a moment ago: nothing listens there.
    const port = await new Promise<number>((resolve) => {
      const s = createServer().listen(0, "127.0.0.1", () => {
        const p = (s.address() as { port: number }).port;
        s.close(() => resolve(p));
      });
    });
    const r = await runCli(["scan", "project/day-1/clean.wav", "--format", "json", "-q", "-w", "1", "--upload", "--server", `http://127.0.0.1:${port}`, "--collection", "Ferry Terminal Interviews 1978"], {
      cwd: dir,
      env: { ...env, TIDEMARK_TOKEN: "tok1:s3cret", TIDEMARK_NO_CONFIG: "1" },
    });
    expect(r.exitCode).toBe(4);
    expect(r.stderr).toContain("tidemark upload --spool");
  });
});
