/**
 * Close-ups end to end (issue #16): the real `tidemark` binary on a synthesised file with a planted 40 ms
 * dropout and a near-full-scale sample. Outside references: pngjs (npm) decodes the PNGs, Debian's ffmpeg
 * decodes the WAV excerpt and the source independently (the excerpt must be the source window's samples
 * exactly), ajv (npm) validates the report against the published JSON Schema, and the level grid's
 * read-out of a 1 kHz tone is checked against the tone's known frequency and level.
 */
import { execFileSync } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { Ajv2020 } from "ajv/dist/2020.js";
import { PNG } from "pngjs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { pinkNoise, sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { ffmpegAvailable } from "../helpers/ffmpeg.ts";
import { scanReportSchema, type FileReport, type ScanReport } from "../../shared/src/types/report.ts";
import { SPECTROGRAM_MARGINS, WAVEFORM_MARGINS } from "../../shared/src/render/layout.ts";
import { isolatedEnv, repoRoot, runCli } from "./runCli.ts";

const RATE = 48000;
const SECONDS = 20;
const DROPOUT_AT = 10 * RATE;
const DROPOUT_FRAMES = Math.round(0.04 * RATE);
const PEAK_AT = 15 * RATE + 123;

let dir: string;
const env = isolatedEnv();
const ajv = new Ajv2020({ allErrors: true, strict: true });
ajv.addFormat("date-time", true);
const validateReport = ajv.compile(JSON.parse(readFileSync(path.join(repoRoot, "shared", "schema", "report.schema.json"), "utf8")));

let report: ScanReport;
let fault: FileReport;
let tone: FileReport;

function parse(text: string): ScanReport {
  const r = JSON.parse(text) as ScanReport;
  expect(validateReport(r), JSON.stringify(validateReport.errors)).toBe(true);
  return r;
}

/** Decodes a file with Debian's ffmpeg to interleaved signed 32-bit integers (24-bit samples land ×256). */
function ffmpegDecode(file: string): Int32Array {
  const out = execFileSync("ffmpeg", ["-hide_banner", "-loglevel", "error", "-i", file, "-f", "s32le", "-acodec", "pcm_s32le", "-"], { maxBuffer: 1 << 28 });
  return new Int32Array(out.buffer, out.byteOffset, out.byteLength / 4);
}

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-closeups-"));
  const left = pinkNoise({ sampleRateHz: RATE, seconds: SECONDS, rmsDbfs: -24, seed: 5 });
  const right = pinkNoise({ sampleRateHz: RATE, seconds: SECONDS, rmsDbfs: -24, seed: 6 });
  for (const x of [left, right]) x.fill(0, DROPOUT_AT, DROPOUT_AT + DROPOUT_FRAMES);
  left[PEAK_AT] = 0.999; // −0.009 dBFS: near-clip without a clipped run
  mkdirSync(path.join(dir, "in"), { recursive: true });
  writeFileSync(path.join(dir, "in", "fault.wav"), encodeWav([left, right], { sampleRateHz: RATE, bitDepth: 24 }));
  const t = sine({ frequencyHz: 1000, sampleRateHz: RATE, seconds: 3, peakDbfs: -20 });
  writeFileSync(path.join(dir, "in", "tone.wav"), encodeWav([t], { sampleRateHz: RATE, bitDepth: 16 }));
  const run = await runCli(["scan", "in", "--spectrograms", "png", "--format", "json", "--workers", "1", "--no-fingerprint"], { cwd: dir, env });
  expect(run.exitCode, run.stderr).toBe(1); // the dropout fails access-copy
  report = parse(run.stdout);
  fault = report.files.find((f) => f.path === "fault.wav")!;
  tone = report.files.find((f) => f.path === "tone.wav")!;
}, 120_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("scan writes close-ups beside the PNGs", () => {
  it("carries the new schema id and the profile's limits", () => {
    expect(report.schema).toBe("tidemark.report/2");
    // access-copy: true peak ≤ −1 dBTP, no loudness target (builtinProfiles.ts).
    expect(report.profile.limits).toEqual({ integratedLufs: null, truePeakMaxDbtp: -1 });
  });

  it("gives the dropout (both channels) one close-up and the near-clip peak another", () => {
    const dropouts = fault.findings.flatMap((f, i) => (f.code === "dropout" ? [i] : []));
    const nearClip = fault.findings.findIndex((f) => f.code === "near-clip");
    expect(dropouts).toHaveLength(2);
    expect(nearClip).toBeGreaterThanOrEqual(0);
    const closeups = fault.closeups!;
    const forDropout = closeups.find((c) => c.findings.includes(dropouts[0]))!;
    expect(forDropout.findings).toEqual(expect.arrayContaining(dropouts));
    // 2 s before the start and 2 s after the end (the profile's default window).
    expect(forDropout.startSeconds).toBeCloseTo(10 - 2, 3);
    expect(forDropout.endSeconds).toBeCloseTo(10.04 + 2, 3);
    expect(forDropout.secondsPerColumn).toBeLessThanOrEqual(0.01);
    const forPeak = closeups.find((c) => c.findings.includes(nearClip))!;
    expect(forPeak.startSeconds).toBeCloseTo(PEAK_AT / RATE - 2, 3);
    // Every finding is shown or said to be left out.
    const shown = new Set(closeups.flatMap((c) => c.findings));
    const omitted = new Set(fault.closeupsOmitted!.map((o) => o.finding));
    fault.findings.forEach((_, i) => expect(shown.has(i) !== omitted.has(i), `finding ${i}`).toBe(true));
  });

  it("writes PNGs whose plot is one column per ≤ 10 ms, with the overview's margins (decoded with pngjs)", () => {
    for (const c of fault.closeups!) {
      const columns = Math.round((c.endSeconds - c.startSeconds) / c.secondsPerColumn);
      const spectrogram = PNG.sync.read(readFileSync(path.join(dir, c.spectrogram)));
      expect(spectrogram.width).toBe(columns + SPECTROGRAM_MARGINS.leftPx + SPECTROGRAM_MARGINS.rightPx);
      expect(spectrogram.height).toBe(300); // half the overview's 600 (writeCloseups.ts)
      const waveform = PNG.sync.read(readFileSync(path.join(dir, c.waveform)));
      expect(waveform.width).toBe(columns + WAVEFORM_MARGINS.leftPx + WAVEFORM_MARGINS.rightPx);
      expect(waveform.height).toBe(120);
    }
  });

  it.runIf(ffmpegAvailable)("writes an excerpt that Debian's ffmpeg decodes to exactly the source window's samples", () => {
    const source = ffmpegDecode(path.join(dir, "in", "fault.wav"));
    for (const c of fault.closeups!) {
      expect(c.excerptMediaType).toBe("audio/wav");
      expect(c.excerptSampleRateHz).toBe(RATE);
      const excerpt = ffmpegDecode(path.join(dir, c.excerpt!));
      const from = Math.round(c.startSeconds * RATE) * 2;
      const to = Math.round(c.endSeconds * RATE) * 2;
      expect(excerpt.length).toBe(to - from);
      let differing = 0;
      for (let i = 0; i < excerpt.length; i++) if (excerpt[i] !== source[from + i]) differing++;
      expect(differing).toBe(0);
    }
  });

  it("writes a loudness curve whose maxima are the report's max momentary and short-term loudness", () => {
    const curve = JSON.parse(readFileSync(path.join(dir, fault.loudnessCurve!), "utf8")) as {
      schema: string;
      stepSeconds: number;
      momentaryLufs: (number | null)[];
      shortTermLufs: (number | null)[];
      samplePeakDbfs: (number | null)[][];
    };
    expect(curve.schema).toBe("tidemark.loudness-curve/1");
    expect(curve.stepSeconds).toBeCloseTo(0.1, 9);
    expect(curve.momentaryLufs).toHaveLength(SECONDS * 10);
    const max = (xs: (number | null)[]) => Math.max(...xs.filter((x): x is number => x !== null));
    expect(Math.abs(max(curve.momentaryLufs) - fault.metrics!.maxMomentaryLufs!)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(max(curve.shortTermLufs) - fault.metrics!.maxShortTermLufs!)).toBeLessThanOrEqual(0.01);
    // Per-channel sample-peak envelope: its maximum is the channel's sample peak.
    expect(curve.samplePeakDbfs).toHaveLength(2);
    expect(Math.abs(max(curve.samplePeakDbfs[0]) - fault.metrics!.channels[0].samplePeakDbfs!)).toBeLessThanOrEqual(0.01);
  });

  it("writes a level grid of the overview's plot size that reads a 1 kHz tone at 1000 Hz and its level", () => {
    const grid = JSON.parse(readFileSync(path.join(dir, tone.levelGrid!), "utf8")) as {
      schema: string;
      columns: number;
      rows: number;
      rowCenterHz: number[];
      dbMin: number;
      dbMax: number;
      levels: string;
    };
    expect(grid.schema).toBe("tidemark.level-grid/1");
    expect(grid.columns).toBe(1600 - SPECTROGRAM_MARGINS.leftPx - SPECTROGRAM_MARGINS.rightPx);
    expect(grid.rows).toBe(600 - SPECTROGRAM_MARGINS.topPx - SPECTROGRAM_MARGINS.bottomPx);
    const levels = Buffer.from(grid.levels, "base64");
    expect(levels.length).toBe(grid.columns * grid.rows);
    const column = Math.floor(grid.columns / 2);
    let best = 0;
    for (let r = 1; r < grid.rows; r++) if (levels[column * grid.rows + r] > levels[column * grid.rows + best]) best = r;
    // Within one FFT bin (2048 points at 48 kHz: 23.4 Hz) of the tone, and its peak level (a sine of
    // peak amplitude a reads a² in its bin, fft.ts) within 1 dB of −20 dBFS.
    expect(Math.abs(grid.rowCenterHz[best] - 1000)).toBeLessThanOrEqual(RATE / 2048);
    const db = grid.dbMin + (levels[column * grid.rows + best] * (grid.dbMax - grid.dbMin)) / 255;
    expect(Math.abs(db - -20)).toBeLessThanOrEqual(1);
  });

  it("leaves every close-up artefact out with --no-closeups", async () => {
    const run = await runCli(["scan", "in/fault.wav", "--spectrograms", "png2", "--format", "json", "--workers", "1", "--no-fingerprint", "--no-closeups"], { cwd: dir, env });
    const file = parse(run.stdout).files[0];
    for (const key of ["levelGrid", "loudnessCurve", "closeups", "closeupsOmitted"]) expect(file).not.toHaveProperty(key);
    expect(existsSync(path.join(dir, "png2", "fault.wav.png"))).toBe(true);
    expect(existsSync(path.join(dir, "png2", "fault.wav.levels.json"))).toBe(false);
    expect(existsSync(path.join(dir, "png2", "fault.wav.closeup-1.png"))).toBe(false);
  }, 60_000);
});

describe("older reports", () => {
  it("a tidemark.report/1 report (the demo report as written before close-ups) still validates (zod and the published JSON Schema)", () => {
    const old = JSON.parse(readFileSync(path.join(repoRoot, "tests", "fixtures", "sample-report-v1.json"), "utf8")) as ScanReport;
    expect(old.schema).toBe("tidemark.report/1");
    expect(scanReportSchema.safeParse(old).success).toBe(true);
    expect(validateReport(old), JSON.stringify(validateReport.errors)).toBe(true);
    expect(scanReportSchema.safeParse({ ...old, schema: "tidemark.report/3" }).success).toBe(false);
  });
});
