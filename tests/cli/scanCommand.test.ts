/**
 * End-to-end runs of the real `tidemark` binary on synthesised files in a temp folder: exit codes, each
 * report format parsed back by an independent parser, workers 1 vs 2, PNGs, hostile input, bad profiles.
 */
import { execFileSync } from "node:child_process";
import { createHash } from "node:crypto";
import { mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { Ajv2020 } from "ajv/dist/2020.js";
import { parse as parseCsv } from "csv-parse/sync";
import { XMLParser, XMLValidator } from "fast-xml-parser";
import { PNG } from "pngjs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { hardClip, pinkNoise, sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import type { ScanReport } from "../../shared/src/types/report.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../../shared/src/types/settings.ts";
import { validateWithXmllint } from "../helpers/xmlSchema.ts";
import { isolatedEnv, repoRoot, runCli, withoutTimestamps } from "./runCli.ts";

let dir: string;
const env = isolatedEnv();

const ajv = new Ajv2020({ allErrors: true, strict: true });
ajv.addFormat("date-time", true);
const validateReport = ajv.compile(JSON.parse(readFileSync(path.join(repoRoot, "shared", "schema", "report.schema.json"), "utf8")));

function write(rel: string, bytes: Uint8Array | string): string {
  const file = path.join(dir, rel);
  mkdirSync(path.dirname(file), { recursive: true });
  writeFileSync(file, bytes);
  return file;
}

const scan = (args: string[]) => runCli(["scan", ...args], { cwd: dir, env });

function parseReport(text: string): ScanReport {
  const report = JSON.parse(text) as ScanReport;
  expect(validateReport(report), JSON.stringify(validateReport.errors)).toBe(true);
  return report;
}

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-scan-"));
  const rate = 48000;
  // EBU Tech 3341 case 1 is a stereo 1 kHz sine at −23 dBFS reading −23.0 LUFS; here 3 dB hotter.
  const left = sine({ frequencyHz: 1000, sampleRateHz: rate, seconds: 3, peakDbfs: -20 });
  const right = sine({ frequencyHz: 1000, sampleRateHz: rate, seconds: 3, peakDbfs: -20, phaseRadians: Math.PI / 2 });
  write("archive/Ferry/tone-1k.wav", encodeWav([left, right], { sampleRateHz: rate, bitDepth: 24 }));
  write(
    "archive/Ferry/hiss.bwf",
    encodeWav([pinkNoise({ sampleRateHz: 44100, seconds: 2, rmsDbfs: -26, seed: 3 })], {
      sampleRateHz: 44100,
      bitDepth: 16,
      bext: { description: "Ferry Terminal Interviews 1978, tape 9", originator: "Harbourside Sound Archive", originatorReference: "HSA-FTI-09" },
    }),
  );
  const loud = sine({ frequencyHz: 441, sampleRateHz: rate, seconds: 2, peakDbfs: 6 });
  write("archive/Reels/clipped.wav", encodeWav([hardClip(loud), hardClip(loud)], { sampleRateHz: rate, bitDepth: 24 }));
  write("archive/Reels/sub/quiet.rf64", encodeWav([sine({ frequencyHz: 440, sampleRateHz: rate, seconds: 1, peakDbfs: -30 })], { sampleRateHz: rate, bitDepth: 24, rf64: true }));
  write("archive/Reels/notes.wav", "Lighthouse Choir Reels: reel 3 is missing its leader tape.\n");
  write("bad-profile.json", JSON.stringify({ name: "reels", thresholds: { truePeakDbtp: { fail: "high" } } }));
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("tidemark scan (real binary)", () => {
  let report: ScanReport;
  let reportText: string;

  beforeAll(async () => {
    const r = await scan(["archive", "--format", "json", "--workers", "1"]);
    expect(r.stderr).not.toMatch(/\n\s+at /);
    expect(r.exitCode).toBe(1);
    reportText = r.stdout;
    report = parseReport(reportText);
  });

  it("reports every file relative to the scanned folder, sorted, and validates against report.schema.json (ajv)", () => {
    expect(report.files.map((f) => f.path)).toEqual(["Ferry/hiss.bwf", "Ferry/tone-1k.wav", "Reels/clipped.wav", "Reels/notes.wav", "Reels/sub/quiet.rf64"]);
    expect(report.schema).toBe("tidemark.report/2");
    expect(report.profile.name).toBe("access-copy");
    expect(report.profile.hash).toMatch(/^[0-9a-f]{64}$/);
    expect(report.summary).toEqual({
      files: 5,
      pass: report.files.filter((f) => f.verdict === "pass").length,
      warn: report.files.filter((f) => f.verdict === "warn").length,
      fail: report.files.filter((f) => f.verdict === "fail").length,
      error: 1,
    });
  });

  it("gives SHA-256 values equal to node:crypto's over the same bytes", () => {
    for (const f of report.files.filter((x) => x.sha256)) {
      const expected = createHash("sha256").update(readFileSync(path.join(dir, "archive", f.path))).digest("hex");
      expect(f.sha256, f.path).toBe(expected);
    }
  });

  it("measures the tone: peak, RMS and loudness from the published definitions", () => {
    const tone = report.files.find((f) => f.path === "Ferry/tone-1k.wav")!;
    expect(tone.verdict).toBe("pass");
    expect(tone.format).toEqual({ container: "wav", encoding: "pcm", sampleRateHz: 48000, bitDepth: 24, channels: 2, durationSeconds: 3 });
    // Common practice: a sine's RMS is its peak − 3.01 dB.
    expect(tone.metrics!.samplePeakDbfs!).toBeCloseTo(-20, 1);
    expect(tone.metrics!.rmsDbfs!).toBeCloseTo(-23.01, 1);
    // EBU Tech 3341 case 1 scaled by +3 dB: −20.0 LUFS ± 0.1 LU.
    expect(Math.abs(tone.metrics!.integratedLufs! - -20)).toBeLessThanOrEqual(0.1);
    // IEC 61260-1: 1 kHz is an octave-band centre; the tone's energy is there.
    const loudest = [...tone.metrics!.bands.octave].sort((a, b) => (b.db ?? -999) - (a.db ?? -999))[0];
    expect(loudest.centerHz).toBe(1000);
  });

  it("keeps the BWF bext fields (EBU Tech 3285)", () => {
    const hiss = report.files.find((f) => f.path === "Ferry/hiss.bwf")!;
    expect(hiss.format?.container).toBe("bwf");
    expect(hiss.metadata.bext).toMatchObject({ description: "Ferry Terminal Interviews 1978, tape 9", originatorReference: "HSA-FTI-09" });
  });

  it("fails the clipped file with clipping findings", () => {
    const clipped = report.files.find((f) => f.path === "Reels/clipped.wav")!;
    expect(clipped.verdict).toBe("fail");
    expect(clipped.metrics!.clipEvents).toBeGreaterThan(0);
    expect(clipped.findings.some((f) => f.code === "clipping" && f.severity === "fail")).toBe(true);
  });

  it("gives a text file named .wav verdict error with a stable code and a one-line message, and carries on", () => {
    const notes = report.files.find((f) => f.path === "Reels/notes.wav")!;
    expect(notes.verdict).toBe("error");
    expect(notes.error?.code).toBe("not-riff");
    expect(notes.error?.message).not.toContain("\n");
    expect(notes.error?.message).not.toContain(dir);
    expect(report.files.find((f) => f.path === "Reels/sub/quiet.rf64")?.format?.container).toBe("rf64");
  });

  it("gives identical reports with --workers 2 (minus timestamps)", async () => {
    const r = await scan(["archive", "--format", "json", "--workers", "2"]);
    expect(r.exitCode).toBe(1);
    expect(withoutTimestamps(r.stdout)).toEqual(withoutTimestamps(reportText));
  });

  it("writes CSV that csv-parse reads back as one row a file (RFC 4180)", async () => {
    const r = await scan(["archive", "--out", "report.csv", "--quiet"]);
    expect(r.exitCode).toBe(1);
    expect(r.stdout).toBe("");
    const rows = parseCsv(readFileSync(path.join(dir, "report.csv"), "utf8"), { columns: true }) as Record<string, string>[];
    expect(rows.map((x) => [x.path, x.verdict])).toEqual(report.files.map((f) => [f.path, f.verdict]));
    expect(rows.find((x) => x.path === "Reels/notes.wav")?.error_code).toBe("not-riff");
  });

  it("writes JUnit XML valid against the published JUnit schema: a testcase a file, one failure per failed file", async () => {
    const r = await scan(["archive", "--format", "junit", "-w", "2"]);
    expect(r.exitCode).toBe(1);
    expect(XMLValidator.validate(r.stdout)).toBe(true);
    // Source: junit-10.xsd (../shared/reference, the schema a widely used CI server imports), checked by Debian's xmllint.
    const lint = validateWithXmllint(r.stdout, "junit-10.xsd");
    expect(lint.output).toContain("validates");
    expect(lint.valid).toBe(true);
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "@", isArray: (n) => n === "testcase" || n === "failure" || n === "property" }).parse(r.stdout);
    const suite = doc.testsuites.testsuite;
    expect(suite["@name"]).toBe("archive");
    const props = Object.fromEntries((suite.properties.property as Record<string, string>[]).map((p) => [p["@name"], p["@value"]]));
    expect(props.profile).toBe(report.profile.name);
    expect(props["profile.hash"]).toBe(report.profile.hash);
    const cases = suite.testcase as Record<string, unknown>[];
    expect(cases.map((c) => c["@name"])).toEqual(report.files.map((f) => f.path));
    for (const [i, f] of report.files.entries()) {
      const fails = f.error ? [] : f.findings.filter((x) => x.severity === "fail");
      const failure = (cases[i].failure as Record<string, string>[] | undefined) ?? [];
      expect(failure.length, f.path).toBe(fails.length > 0 ? 1 : 0);
      if (fails.length > 0) for (const x of fails) expect(failure[0]["#text"]).toContain(x.message.slice(0, 40));
    }
    expect(Number(suite["@failures"])).toBe(report.files.filter((f) => !f.error && f.findings.some((x) => x.severity === "fail")).length);
    expect(Number(suite["@errors"])).toBe(report.summary.error);
    expect(cases[3].error).toMatchObject({ "@type": "not-riff" });
  });

  it("prints the table format, and exits 0 when no file failed", async () => {
    const r = await scan(["archive/Ferry", "--format", "table"]);
    expect(r.exitCode).toBe(0);
    expect(r.stdout).toMatch(/^VERDICT\s+PATH/);
    expect(r.stdout).toMatch(/PASS\s+tone-1k\.wav\s+wav 48k\/24 2ch/);
    expect(r.stdout).toContain("2 file(s):");
  });

  it("writes a spectrogram and a waveform PNG a file, mirroring the tree, and names them in the report", async () => {
    const r = await scan(["archive", "--spectrograms", "png", "--out", "with-png.json", "-q"]);
    expect(r.exitCode).toBe(1);
    const withPng = parseReport(readFileSync(path.join(dir, "with-png.json"), "utf8"));
    const tone = withPng.files.find((f) => f.path === "Ferry/tone-1k.wav")!;
    expect(tone.spectrogram).toBe("png/Ferry/tone-1k.wav.png");
    // Decoded by pngjs (npm), independently of our encoder.
    const image = PNG.sync.read(readFileSync(path.join(dir, tone.spectrogram!)));
    expect([image.width, image.height]).toEqual([DEFAULT_ANALYSIS_SETTINGS.spectrogram.width, DEFAULT_ANALYSIS_SETTINGS.spectrogram.height]);
    const strip = PNG.sync.read(readFileSync(path.join(dir, "png/Ferry/tone-1k.wav.waveform.png")));
    expect(strip.width).toBe(DEFAULT_ANALYSIS_SETTINGS.spectrogram.width);
    expect(withPng.files.find((f) => f.path === "Reels/sub/quiet.rf64")?.spectrogram).toBe("png/Reels/sub/quiet.rf64.png");
    expect(withPng.files.find((f) => f.path === "Reels/notes.wav")?.spectrogram).toBeNull();
  });

  it("reports a FIFO and a symlink loop as errors with stable codes instead of hanging, and measures the rest", async () => {
    const hostile = path.join(dir, "hostile");
    mkdirSync(path.join(hostile, "reel"), { recursive: true });
    execFileSync("mkfifo", [path.join(hostile, "reel", "pipe.wav")]);
    symlinkSync(hostile, path.join(hostile, "reel", "back"));
    writeFileSync(path.join(hostile, "reel", "tone.wav"), readFileSync(path.join(dir, "archive/Ferry/tone-1k.wav")));
    const r = await scan(["hostile", "--format", "json", "-w", "1"]);
    // Exit-code table (README): 3 = a file could not be read and none failed.
    expect(r.exitCode).toBe(3);
    expect(r.stderr).not.toMatch(/\n\s+at /);
    const hostileReport = parseReport(r.stdout);
    expect(hostileReport.files.map((f) => [f.path, f.verdict, f.error?.code ?? null])).toEqual([
      ["reel/back", "error", "symlink-loop"],
      ["reel/pipe.wav", "error", "not-a-file"],
      ["reel/tone.wav", "pass", null],
    ]);
  });

  it("judges with another built-in profile and records its name", async () => {
    const r = await scan(["archive/Ferry", "-p", "preservation-master", "--format", "json"]);
    const judged = parseReport(r.stdout);
    expect(judged.profile.name).toBe("preservation-master");
    // IASA TC-04 (from memory): 48 kHz / 24-bit minimum, so the 44.1 kHz / 16-bit BWF fails on format.
    const hiss = judged.files.find((f) => f.path === "hiss.bwf")!;
    expect(hiss.findings.filter((f) => f.code === "format-mismatch").map((f) => f.message)).toEqual([
      "sample rate 44100 Hz, expected at least 48000 Hz",
      "bit depth 16, expected at least 24",
    ]);
    expect(r.exitCode).toBe(1);
  });

  it("fingerprints every measured file by default, and leaves the fingerprint out with --no-fingerprint", async () => {
    const measured = report.files.filter((f) => f.error === null);
    expect(measured.length).toBeGreaterThan(0);
    for (const f of measured) expect(typeof f.fingerprint, f.path).toBe("string");
    const r = await scan(["archive", "--format", "json", "--workers", "1", "--no-fingerprint"]);
    const without = parseReport(r.stdout);
    for (const f of without.files) expect(f, f.path).not.toHaveProperty("fingerprint");
    // Everything else is the same measurement.
    const strip = (x: ScanReport) => x.files.map(({ fingerprint: _fp, ...rest }) => rest);
    expect(strip(without)).toEqual(strip(report));
    // A resumed scan that wants fingerprints measures again what a --no-fingerprint run left in the state.
    const state = path.join(dir, "no-fingerprint.state");
    await scan(["archive/Ferry", "--no-fingerprint", "--resume", state, "--format", "json"]);
    const resumed = parseReport((await scan(["archive/Ferry", "--resume", state, "--format", "json"])).stdout);
    for (const f of resumed.files) expect(typeof f.fingerprint, f.path).toBe("string");
  });
});

describe("tidemark scan: bad invocations exit 2 with one line naming the problem", () => {
  it.each([
    [["scan", "archive", "--profile", "bad-profile.json"], /^tidemark: bad profile bad-profile\.json: thresholds\.truePeakDbtp\.fail: expected number, received string$/],
    [["scan", "archive", "--profile", "lighthouse-strict"], /profile not found: "lighthouse-strict" is neither a built-in profile/],
    [["scan", "archive/Ferry", "no-such-reel"], /^tidemark: path not found: no-such-reel$/],
    [["scan", "archive", "--out", "missing-dir/r.json"], /cannot write --out missing-dir\/r\.json: folder missing-dir does not exist/],
    [["scan", "archive", "--workers", "0"], /expected a whole number of workers from 1 to 64, got "0"/],
    [["profiles", "bad-profile.json"], /thresholds\.truePeakDbtp\.fail/],
  ])("%j", async (args, message) => {
    const r = await runCli(args, { cwd: dir, env });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/\n\s+at /);
    expect(r.stdout).toBe("");
  });

  it("prints a built-in profile as JSON that is a valid custom profile", async () => {
    const r = await runCli(["profiles", "broadcast-loudness"], { cwd: dir, env });
    expect(r.exitCode).toBe(0);
    const profile = JSON.parse(r.stdout);
    // EBU R 128 (2020): −23 LUFS target, −1 dBTP maximum true peak.
    expect(profile.thresholds).toMatchObject({ loudness: { targetLufs: -23, warnLu: 0.5, failLu: 1 }, truePeakDbtp: { fail: -1 } });
    writeFileSync(path.join(dir, "copy.json"), JSON.stringify({ ...profile, name: "harbourside-broadcast" }));
    const check = await runCli(["profiles", "copy.json"], { cwd: dir, env });
    expect(check.exitCode).toBe(0);
    expect(check.stderr).toMatch(/copy\.json is a valid profile "harbourside-broadcast"/);
  });
});
