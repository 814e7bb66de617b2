/**
 * `tidemark match <file> --against REPORT.json` with the real binary on synthesised programmes
 * (issue #11). The report holds fingerprints of an original and of unrelated distractors; the copies
 * are WAV files the binary reads: +6 dB, white noise at 20 dB SNR, resampled to 44.1 kHz by sox, and
 * trimmed by 10 s. Each must find the original first, at the right offset (±0.1 s); an unrelated
 * recording must find nothing (exit 1); bad invocations exit 2.
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { createServer } from "node:http";
import type { AddressInfo } from "node:net";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { encodeFingerprint } from "@tidemark/shared/fingerprint/index";
import type { ScanReport } from "@tidemark/shared/types/report";
import { fingerprintOf, programme, soxMono, withNoise } from "../fixtures/fingerprintSignals.ts";
import { gainDb } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { isolatedEnv, runCli } from "./runCli.ts";

const RATE = 48000;
const SECONDS = 40;
const OFFSET_TOLERANCE_SECONDS = 0.1; // issue #11

let dir: string;
const env = isolatedEnv();
const cli = (args: string[]) => runCli(args, { cwd: dir, env });

function report(files: { path: string; fingerprint?: string | null }[]): ScanReport {
  return {
    schema: "tidemark.report/1",
    tool: { name: "tidemark", version: "test" },
    profile: { name: "access-copy" },
    startedAt: "2026-12-01T09:00:00.000Z",
    finishedAt: "2026-12-01T09:05:00.000Z",
    summary: { files: files.length, pass: files.length, warn: 0, fail: 0, error: 0 },
    files: files.map((f) => ({
      path: f.path,
      sizeBytes: 1000,
      sha256: null,
      format: null,
      metadata: {},
      metrics: null,
      findings: [],
      verdict: "pass",
      error: null,
      spectrogram: null,
      ...(f.fingerprint === undefined ? {} : { fingerprint: f.fingerprint }),
    })),
  };
}

const COPIES: { name: string; file: string; expectedOffsetSeconds: number }[] = [
  { name: "+6 dB gain", file: "louder.wav", expectedOffsetSeconds: 0 },
  { name: "white noise at 20 dB SNR", file: "noisy.wav", expectedOffsetSeconds: 0 },
  { name: "resampled to 44.1 kHz (sox), 16-bit", file: "resampled.wav", expectedOffsetSeconds: 0 },
  { name: "first 10 s trimmed", file: "trimmed.wav", expectedOffsetSeconds: 10 },
];

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-match-"));
  const original = programme({ seed: 1, seconds: SECONDS, sampleRateHz: RATE });
  const distractors = [200, 201, 202].map((seed) => fingerprintOf([programme({ seed, seconds: SECONDS, sampleRateHz: 16000 })], 16000));
  writeFileSync(
    path.join(dir, "report.json"),
    JSON.stringify(
      report([
        { path: "ferry/unrelated-1.wav", fingerprint: encodeFingerprint(distractors[0]) },
        { path: "choir/reel-01.wav", fingerprint: encodeFingerprint(fingerprintOf([original], RATE)) },
        { path: "ferry/unrelated-2.wav", fingerprint: encodeFingerprint(distractors[1]) },
        { path: "ferry/unreadable.wav", fingerprint: null },
        { path: "ferry/scanned-before-fingerprints.wav" },
      ]),
    ),
  );
  writeFileSync(path.join(dir, "no-fingerprints.json"), JSON.stringify(report([{ path: "a.wav" }, { path: "b.wav", fingerprint: null }])));
  const wav24 = (x: Float32Array, sampleRateHz = RATE) => encodeWav([x], { sampleRateHz, bitDepth: 24 });
  writeFileSync(path.join(dir, "louder.wav"), wav24(gainDb(original, 6)));
  writeFileSync(path.join(dir, "noisy.wav"), wav24(withNoise(original, RATE, 20, 9)));
  writeFileSync(path.join(dir, "resampled.wav"), encodeWav([soxMono(original, RATE, ["rate", "-v", "44100"])], { sampleRateHz: 44100, bitDepth: 16 }));
  writeFileSync(path.join(dir, "trimmed.wav"), wav24(original.subarray(10 * RATE)));
  writeFileSync(path.join(dir, "unrelated.wav"), wav24(programme({ seed: 203, seconds: SECONDS, sampleRateHz: RATE })));
  writeFileSync(path.join(dir, "silence.wav"), wav24(new Float32Array(2 * RATE)));
  writeFileSync(path.join(dir, "not-audio.wav"), "RIFF but not really");
}, 60_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("tidemark scan, then match against its report (real binary)", () => {
  it("finds a stereo transfer from a copy with one channel polarity-inverted, trimmed by 10 s", async () => {
    // A stereo recording (two programmes as L and R) scanned into a report; the copy's R is inverted.
    const left = programme({ seed: 11, seconds: 30, sampleRateHz: RATE });
    const right = programme({ seed: 12, seconds: 30, sampleRateHz: RATE });
    mkdirSync(path.join(dir, "archive", "reels"), { recursive: true });
    writeFileSync(path.join(dir, "archive", "reels", "stereo-master.wav"), encodeWav([left, right], { sampleRateHz: RATE, bitDepth: 24 }));
    writeFileSync(path.join(dir, "archive", "other.wav"), encodeWav([programme({ seed: 13, seconds: 30, sampleRateHz: 44100 })], { sampleRateHz: 44100, bitDepth: 16 }));
    const scan = await cli(["scan", "archive", "--out", "scanned.json", "-q", "-w", "1"]);
    expect(scan.exitCode, scan.stderr).toBeLessThanOrEqual(1);
    const scanned = JSON.parse(readFileSync(path.join(dir, "scanned.json"), "utf8")) as ScanReport;
    for (const f of scanned.files) expect(f.fingerprint, f.path).toMatch(/^VEY/); // base64 of the "TF" magic
    const inverted = right.subarray(10 * RATE).map((x) => -x);
    writeFileSync(path.join(dir, "flipped.wav"), encodeWav([left.subarray(10 * RATE), inverted], { sampleRateHz: RATE, bitDepth: 24 }));

    const r = await cli(["match", "flipped.wav", "--against", "scanned.json"]);
    expect(r.exitCode, r.stderr).toBe(0);
    const lines = r.stdout.trimEnd().split("\n").map((l) => l.split("\t"));
    expect(lines.map((l) => l[0])).toEqual(["reels/stereo-master.wav"]);
    expect(Math.abs(Number(lines[0][2]) - 10)).toBeLessThanOrEqual(OFFSET_TOLERANCE_SECONDS);
  });
});

describe("tidemark match --against (real binary)", () => {
  it.each(COPIES)("finds the original first for a copy with $name, at the right offset", async ({ file, expectedOffsetSeconds }) => {
    const r = await cli(["match", file, "--against", "report.json"]);
    expect(r.exitCode, r.stderr).toBe(0);
    const lines = r.stdout.trimEnd().split("\n");
    const [matchPath, score, offset] = lines[0].split("\t");
    expect(matchPath).toBe("choir/reel-01.wav");
    expect(Number(score)).toBeGreaterThanOrEqual(12);
    expect(Math.abs(Number(offset) - expectedOffsetSeconds)).toBeLessThanOrEqual(OFFSET_TOLERANCE_SECONDS);
    // Only the original: the distractors never clear the threshold.
    expect(lines).toHaveLength(1);
    expect(r.stderr).toContain("compared with 3 files; 2 had no fingerprint of this version");
  });

  it("finds nothing for an unrelated recording or silence, and exits 1", async () => {
    for (const file of ["unrelated.wav", "silence.wav"]) {
      const r = await cli(["match", file, "--against", "report.json"]);
      expect(r.exitCode, file).toBe(1);
      expect(r.stdout).toBe("");
      expect(r.stderr).toContain(`no recording matches ${file}`);
    }
  });

  it("prints JSON with --json, and respects --limit across several reports", async () => {
    const r = await cli(["match", "trimmed.wav", "--against", "report.json", "--against", "report.json", "--json", "--limit", "1"]);
    expect(r.exitCode).toBe(0);
    const body = JSON.parse(r.stdout) as { file: string; fingerprint: { hashes: number }; matches: { path: string; score: number; offsetSeconds: number }[] };
    expect(body.file).toBe("trimmed.wav");
    expect(body.fingerprint.hashes).toBeGreaterThan(100);
    expect(body.matches).toHaveLength(1);
    expect(body.matches[0].path).toBe("report.json: choir/reel-01.wav");
    expect(Math.abs(body.matches[0].offsetSeconds - 10)).toBeLessThanOrEqual(OFFSET_TOLERANCE_SECONDS);
  });

  it.each([
    [["match", "louder.wav"], /expected --against REPORT.json or --server URL/],
    [["match", "louder.wav", "--against", "report.json", "--server", "http://127.0.0.1:9"], /not both/],
    [["match", "louder.wav", "--against", "report.json", "--limit", "0"], /whole number of matches from 1 to 100/],
    [["match", "missing.wav", "--against", "report.json"], /file not found: missing\.wav/],
    [["match", "not-audio.wav", "--against", "report.json"], /cannot fingerprint not-audio\.wav/],
    [["match", "louder.wav", "--against", "nowhere.json"], /report not found: nowhere\.json/],
    [["match", "louder.wav", "--against", "no-fingerprints.json"], /no file in no-fingerprints\.json carries a fingerprint/],
  ])("exits 2 with a one-line reason for %j", async (args, message) => {
    const r = await cli(args);
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/\n\s+at /); // no stack trace
  });

  it("exits 6, not 1, when the server cannot be reached", async () => {
    // A port that was free a moment ago: nothing listens there.
    const probe = createServer();
    await new Promise<void>((resolve) => probe.listen(0, "127.0.0.1", resolve));
    const { port } = probe.address() as AddressInfo;
    await new Promise((resolve) => probe.close(resolve));
    const server = `http://127.0.0.1:${port}`;
    const r = await runCli(["match", "louder.wav", "--server", server], { cwd: dir, env: { ...env, TIDEMARK_TOKEN: "tmid:secret", TIDEMARK_RETRY_BASE_MS: "1" } });
    expect(r.exitCode).toBe(6);
    expect(r.stderr).toContain(`${server}/api/duplicates/lookup?limit=`);
    expect(r.stderr).toMatch(/did not answer after 5 attempts \(last: ECONNREFUSED\)/);
  });
});
