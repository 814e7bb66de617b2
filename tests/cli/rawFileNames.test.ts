/**
 * File names that are not UTF-8 (Latin-1 from old archives), created through Buffer paths: crawled, measured,
 * shown with U+FFFD, told apart by pathBytes, and matched again by verify and --resume. A name typed on the
 * command line reaches the binary as raw bytes through sh's printf (POSIX), as a user's shell would pass it.
 */
import { execFileSync } from "node:child_process";
import { appendFileSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { scanReportSchema } from "../../shared/src/types/report.ts";
import { programme } from "../fixtures/fingerprintSignals.ts";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { binPath, isolatedEnv, runCli } from "./runCli.ts";

let dir: string;
const env = isolatedEnv();
const raw = (...parts: (string | number[])[]): Buffer =>
  Buffer.concat(parts.map((p) => (typeof p === "string" ? Buffer.from(p, "utf8") : Buffer.from(p))));

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-names-"));
  const reels = path.join(dir, "reels");
  mkdirSync(reels);
  const tone = (hz: number): Uint8Array => encodeWav([sine({ frequencyHz: hz, sampleRateHz: 48000, seconds: 1, peakDbfs: -6 })], { sampleRateHz: 48000, bitDepth: 24 });
  // "café.wav" and "cafè.wav" in Latin-1 (0xE9, 0xE8): both display as "caf\uFFFD.wav".
  writeFileSync(raw(reels, "/caf", [0xe9], ".wav"), tone(440));
  writeFileSync(raw(reels, "/caf", [0xe8], ".wav"), tone(880));
  mkdirSync(raw(reels, "/R", [0xe9], "els"));
  writeFileSync(raw(reels, "/R", [0xe9], "els/one.wav"), tone(1000));
  writeFileSync(path.join(reels, "plain.wav"), tone(500));
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("file names that are not UTF-8", () => {
  it("a folder scan measures every file, shows U+FFFD and keeps the exact bytes in pathBytes", async () => {
    const r = await runCli(["scan", "reels", "--format", "json", "--out", "r.json", "--quiet"], { cwd: dir, env });
    expect(r.exitCode).toBe(0);
    const report = scanReportSchema.parse(JSON.parse(readFileSync(path.join(dir, "r.json"), "utf8")));
    expect(report.files.map((f) => f.verdict)).toEqual(["pass", "pass", "pass", "pass"]);
    const byBytes = new Map(report.files.map((f) => [f.pathBytes ? Buffer.from(f.pathBytes, "base64").toString("latin1") : f.path, f]));
    expect([...byBytes.keys()].sort()).toEqual(["R\u00e9els/one.wav", "caf\u00e8.wav", "caf\u00e9.wav", "plain.wav"]);
    expect(byBytes.get("caf\u00e9.wav")?.path).toBe("caf\uFFFD.wav");
    expect(byBytes.get("R\u00e9els/one.wav")?.path).toBe("R\uFFFDels/one.wav");
    expect(byBytes.get("plain.wav")?.pathBytes).toBeUndefined();
    // The two look alike but are different files (440 Hz and 880 Hz).
    expect(byBytes.get("caf\u00e9.wav")?.sha256).not.toBe(byBytes.get("caf\u00e8.wav")?.sha256);
  });

  it("a name given on the command line as raw bytes is found and measured (never 'not found')", () => {
    const out = execFileSync("sh", ["-c", `exec node "$0" scan "$(printf 'reels/caf\\351.wav')" --format json --quiet`, binPath], {
      cwd: dir,
      env: { ...process.env, ...env, FORCE_COLOR: "0" },
      encoding: "utf8",
    });
    const report = scanReportSchema.parse(JSON.parse(out));
    expect(report.files).toHaveLength(1);
    expect(report.files[0]).toMatchObject({ path: "caf\uFFFD.wav", verdict: "pass", error: null });
    expect(Buffer.from(report.files[0].pathBytes!, "base64")).toEqual(raw("caf", [0xe9], ".wav"));
  });

  it("verify matches on the exact bytes: one of the two look-alikes changed is reported, the other unchanged", async () => {
    const same = await runCli(["verify", "reels", "--against", "r.json", "--json"], { cwd: dir, env });
    expect(same.exitCode).toBe(0);
    expect(JSON.parse(same.stdout)).toMatchObject({ unchanged: expect.arrayContaining(["caf\uFFFD.wav", "R\uFFFDels/one.wav"]), changed: [], missing: [], new: [] });
    expect(JSON.parse(same.stdout).unchanged).toHaveLength(4);
    appendFileSync(raw(dir, "/reels/caf", [0xe8], ".wav"), Buffer.from([0]));
    const changed = await runCli(["verify", "reels", "--against", "r.json", "--json"], { cwd: dir, env });
    expect(changed.exitCode).toBe(1);
    const result = JSON.parse(changed.stdout);
    expect(result.changed).toHaveLength(1);
    expect(result.unchanged).toHaveLength(3);
  });

  it("--resume takes every file, look-alikes included, from the state file the second time", async () => {
    const args = ["scan", "reels", "--workers", "2", "--resume", "state.jsonl", "--format", "json"];
    const first = await runCli(args, { cwd: dir, env });
    const second = await runCli(args, { cwd: dir, env });
    expect(second.stderr).toContain("4 unchanged file(s) taken from state.jsonl");
    const a = scanReportSchema.parse(JSON.parse(first.stdout));
    const b = scanReportSchema.parse(JSON.parse(second.stdout));
    expect(b.files.map((f) => [f.path, f.pathBytes, f.sha256])).toEqual(a.files.map((f) => [f.path, f.pathBytes, f.sha256]));
  });

  it("match takes a name given as raw bytes, and refuses a lossy name that could be either look-alike", async () => {
    mkdirSync(path.join(dir, "match"));
    const wav = (seed: number) => encodeWav([programme({ seed, seconds: 20, sampleRateHz: 48000 })], { sampleRateHz: 48000, bitDepth: 24 });
    // "Bänd.wav" in Latin-1 (0xE4) beside an unrelated programme.
    writeFileSync(raw(dir, "/match/B", [0xe4], "nd.wav"), wav(21));
    writeFileSync(path.join(dir, "match", "other.wav"), wav(22));
    const scanned = await runCli(["scan", "match", "--out", "m.json", "--quiet"], { cwd: dir, env });
    expect(scanned.exitCode, scanned.stderr).toBeLessThanOrEqual(1);
    const out = execFileSync("sh", ["-c", `exec node "$0" match "$(printf 'match/B\\344nd.wav')" --against m.json --json`, binPath], {
      cwd: dir,
      env: { ...process.env, ...env, FORCE_COLOR: "0" },
      encoding: "utf8",
    });
    const result = JSON.parse(out) as { fingerprint: { durationSeconds: number }; matches: { path: string; offsetSeconds: number }[] };
    expect(result.fingerprint.durationSeconds).toBe(20);
    expect(result.matches.map((m) => m.path)).toEqual(["B\uFFFDnd.wav"]);
    expect(Math.abs(result.matches[0].offsetSeconds)).toBeLessThanOrEqual(0.1);
    // Typed as U+FFFD, "caf\uFFFD.wav" names both café and cafè: a usage error saying so, never a guess.
    const lossy = await runCli(["match", "reels/caf\uFFFD.wav", "--against", "r.json"], { cwd: dir, env });
    expect(lossy.exitCode).toBe(2);
    expect(lossy.stderr).toMatch(/could name 2 files whose names are not UTF-8/);
  });
});
