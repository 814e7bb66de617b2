/**
 * Interruption and resume with the real binary: Ctrl-C (SIGINT) writes the partial report and exits 130;
 * after a SIGKILL mid-scan, --resume finishes the job and the report equals an uninterrupted scan's.
 */
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, utimesSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { pinkNoise, sine, mix } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import type { ScanReport } from "../../shared/src/types/report.ts";
import { isolatedEnv, runCli, startCli, withoutTimestamps } from "./runCli.ts";

let dir: string;
const env = isolatedEnv();
/** Enough audio that a scan is still running when the first file's record appears. */
const FILES = 16;
const SECONDS = 4;
/** Whole-second mtimes survive utimes exactly, so a test can change content behind an unchanged mtime. */
const FIXED_MTIME = new Date("2026-01-15T10:00:00Z");

const recordsIn = (stateFile: string): number =>
  existsSync(stateFile) ? readFileSync(stateFile, "utf8").split("\n").filter((l) => l.includes('"kind":"file"')).length : 0;

async function waitFor(condition: () => boolean, timeoutMs = 60_000): Promise<void> {
  const start = Date.now();
  while (!condition()) {
    if (Date.now() - start > timeoutMs) throw new Error("timed out waiting for the scan to record a file");
    await new Promise((r) => setTimeout(r, 10));
  }
}

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-resume-e2e-"));
  const rate = 48000;
  const tone = mix(sine({ frequencyHz: 523.25, sampleRateHz: rate, seconds: SECONDS, peakDbfs: -18 }), pinkNoise({ sampleRateHz: rate, seconds: SECONDS, rmsDbfs: -40, seed: 5 }));
  const first = path.join(dir, "reels", "reel-00.wav");
  mkdirSync(path.dirname(first), { recursive: true });
  writeFileSync(first, encodeWav([tone, tone], { sampleRateHz: rate, bitDepth: 24 }));
  for (let i = 1; i < FILES; i++) copyFileSync(first, path.join(dir, "reels", `reel-${String(i).padStart(2, "0")}.wav`));
  for (let i = 0; i < FILES; i++) utimesSync(path.join(dir, "reels", `reel-${String(i).padStart(2, "0")}.wav`), FIXED_MTIME, FIXED_MTIME);
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("interrupted scans", () => {
  it("Ctrl-C finishes the files in flight, writes the partial report and the state, and exits 130", async () => {
    const state = path.join(dir, "sigint.jsonl");
    const child = startCli(["scan", "reels", "--workers", "1", "--resume", state, "--out", "partial.json", "--quiet"], { cwd: dir, env });
    await waitFor(() => recordsIn(state) >= 1);
    child.kill("SIGINT");
    const r = await child;
    expect(r.exitCode).toBe(130);
    expect(String(r.stderr)).toMatch(/interrupted: \d+ of 16 file\(s\) done/);
    const partial = JSON.parse(readFileSync(path.join(dir, "partial.json"), "utf8")) as ScanReport;
    expect(partial.files.length).toBeGreaterThanOrEqual(1);
    expect(partial.files.length).toBeLessThan(FILES);
    // Every file in the partial report was recorded, so a resume skips exactly those.
    expect(recordsIn(state)).toBe(partial.files.length);
  });

  it("after SIGKILL, --resume completes the scan and the report equals an uninterrupted scan's", async () => {
    const reference = await runCli(["scan", "reels", "--workers", "1", "--format", "json"], { cwd: dir, env });
    expect(reference.exitCode).toBe(0);

    const state = path.join(dir, "sigkill.jsonl");
    const child = startCli(["scan", "reels", "--workers", "2", "--resume", state, "--format", "json", "--quiet"], { cwd: dir, env });
    await waitFor(() => recordsIn(state) >= 2);
    child.kill("SIGKILL");
    await child;
    const before = recordsIn(state);
    expect(before).toBeLessThan(FILES);

    const resumed = await runCli(["scan", "reels", "--workers", "2", "--resume", state, "--format", "json"], { cwd: dir, env });
    expect(resumed.exitCode).toBe(0);
    expect(resumed.stderr).toContain(`${before} unchanged file(s) taken from ${state}`);
    expect(withoutTimestamps(resumed.stdout)).toEqual(withoutTimestamps(reference.stdout));
    expect(recordsIn(state)).toBe(FILES);
  });

  it("measures a file again when its content changed behind an unchanged size and mtime (SHA-256 check)", async () => {
    const state = path.join(dir, "sigkill.jsonl");
    const victim = path.join(dir, "reels", "reel-05.wav");
    const bytes = readFileSync(victim);
    bytes[bytes.length - 1] ^= 0x01;
    writeFileSync(victim, bytes);
    utimesSync(victim, FIXED_MTIME, FIXED_MTIME);
    const r = await runCli(["scan", "reels", "--workers", "1", "--resume", state, "--format", "json"], { cwd: dir, env });
    expect(r.stderr).toContain(`${FILES - 1} unchanged file(s) taken from ${state}`);
    const report = JSON.parse(r.stdout) as ScanReport;
    expect(report.files[5].sha256).not.toBe(report.files[4].sha256);
  });
});
