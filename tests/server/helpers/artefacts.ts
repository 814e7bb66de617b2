/**
 * Hand-made review artefacts of issue #16 (CONTRACT-16 §1–§4), independent of the CLI that makes the real
 * ones: tiny PNGs (pngjs), a WAV excerpt (tests/fixtures/wavWriter.ts), a FLAC excerpt encoded by Debian's
 * `flac`, and level-grid / loudness-curve JSON, plus a "tidemark.report/2" file entry pointing at them.
 */
import { execFileSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import type { FileReport, Finding, ScanReport } from "@tidemark/shared/types/report";
import { sine } from "../../fixtures/synth.ts";
import { encodeWav } from "../../fixtures/wavWriter.ts";
import { fileReport, pngBytes, scanReport, type FileSpec, type IngestPart } from "./reports.ts";

export function levelGridBytes(columns = 4, rows = 3): Buffer {
  const levels = new Uint8Array(columns * rows);
  for (let i = 0; i < levels.length; i++) levels[i] = (i * 37) % 256;
  return Buffer.from(
    JSON.stringify({
      schema: "tidemark.level-grid/1",
      durationSeconds: 60,
      columns,
      rows,
      secondsPerColumn: 60 / columns,
      frequencyScale: "log",
      minHz: 20,
      maxHz: 48_000,
      rowCenterHz: Array.from({ length: rows }, (_, r) => 20 * 2 ** r),
      dbMin: -120,
      dbMax: 0,
      levels: Buffer.from(levels).toString("base64"),
    }),
  );
}

export function loudnessCurveBytes(): Buffer {
  return Buffer.from(
    JSON.stringify({
      schema: "tidemark.loudness-curve/1",
      durationSeconds: 0.3,
      stepSeconds: 0.1,
      momentaryLufs: [-20, -15, null],
      shortTermLufs: [-22, -18, null],
      peakStepSeconds: 0.1,
      samplePeakDbfs: [[-3, -1.5, null], [-3.1, -1.6, null]],
    }),
  );
}

/** 0.5 s of a 1 kHz sine, stereo 16-bit at 48 kHz: 96 044 bytes, enough for byte-range checks. */
export function excerptWavBytes(): Buffer {
  const tone = sine({ frequencyHz: 1000, sampleRateHz: 48_000, seconds: 0.5, peakDbfs: -6 });
  return Buffer.from(encodeWav([tone, tone], { sampleRateHz: 48_000, bitDepth: 16 }));
}

/** The same excerpt encoded by Debian's flac (`flac` package), so the bytes come from outside the project. */
export function excerptFlacBytes(): Buffer {
  const dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "flac-"));
  try {
    const wav = path.join(dir, "in.wav");
    const flac = path.join(dir, "out.flac");
    writeFileSync(wav, excerptWavBytes());
    execFileSync("flac", ["--silent", "--force", "-o", flac, wav]);
    return readFileSync(flac);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

const finding = (code: Finding["code"], startSeconds: number): Finding => ({
  code,
  severity: "fail",
  channel: 0,
  startSeconds,
  endSeconds: startSeconds + 0.04,
  message: `${code} at ${startSeconds} s`,
});

/** A file entry with three findings, two close-ups (a FLAC and a WAV excerpt) and one omitted finding. */
export function reviewFileReport(spec: FileSpec): FileReport {
  const base = fileReport({ verdict: "fail", ...spec });
  const stem = spec.path.replace(/\.[^.]*$/, "");
  return {
    ...base,
    findings: spec.findings ?? [finding("dropout", 12), finding("clipping", 30), finding("dropout", 45)],
    spectrogram: `${stem}.png`,
    levelGrid: `${stem}.grid.json`,
    loudnessCurve: `${stem}.loudness.json`,
    closeups: [
      {
        findings: [0],
        startSeconds: 10,
        endSeconds: 14.04,
        secondsPerColumn: 0.005,
        spectrogram: `${stem}.closeup-0.png`,
        waveform: `${stem}.closeup-0.waveform.png`,
        excerpt: `${stem}.closeup-0.flac`,
        excerptMediaType: "audio/flac",
        excerptSampleRateHz: 48_000,
      },
      {
        findings: [1],
        startSeconds: 28,
        endSeconds: 32.04,
        secondsPerColumn: 0.005,
        spectrogram: `${stem}.closeup-1.png`,
        waveform: `${stem}.closeup-1.waveform.png`,
        excerpt: `${stem}.closeup-1.wav`,
        excerptMediaType: "audio/wav",
        excerptSampleRateHz: 48_000,
      },
    ],
    closeupsOmitted: [{ finding: 2, reason: "cap" }],
  };
}

export const PROFILE_LIMITS = { integratedLufs: { target: -23, warnToleranceLu: 1, failToleranceLu: 2 }, truePeakMaxDbtp: -1 };

/** A "tidemark.report/2" report of review files, with the profile's limits. */
export function reviewReport(specs: FileSpec[]): ScanReport {
  const report = scanReport(specs);
  const files = specs.map(reviewFileReport);
  return { ...report, schema: "tidemark.report/2", profile: { ...report.profile, limits: PROFILE_LIMITS }, files };
}

export interface ReviewParts {
  parts: IngestPart[];
  flac: Buffer;
  wav: Buffer;
  grid: Buffer;
  curve: Buffer;
  closeupPng: Buffer;
}

/** Every part of report file `n` as the CLI uploads it (CONTRACT-16 §4). */
export function reviewParts(n: number, flac = excerptFlacBytes()): ReviewParts {
  const wav = excerptWavBytes();
  const grid = levelGridBytes();
  const curve = loudnessCurveBytes();
  const closeupPng = pngBytes(8, 3);
  return {
    flac,
    wav,
    grid,
    curve,
    closeupPng,
    parts: [
      { field: "spectrogram", name: `${n}.png`, bytes: pngBytes() },
      { field: "waveform", name: `${n}.png`, bytes: pngBytes() },
      { field: "levelGrid", name: `${n}.json`, bytes: grid },
      { field: "loudnessCurve", name: `${n}.json`, bytes: curve },
      { field: "closeupSpectrogram", name: `${n}.0.png`, bytes: closeupPng },
      { field: "closeupWaveform", name: `${n}.0.png`, bytes: pngBytes(8, 2) },
      { field: "excerpt", name: `${n}.0.flac`, bytes: flac },
      { field: "closeupSpectrogram", name: `${n}.1.png`, bytes: pngBytes(6, 3) },
      { field: "closeupWaveform", name: `${n}.1.png`, bytes: pngBytes(6, 2) },
      { field: "excerpt", name: `${n}.1.wav`, bytes: wav },
    ],
  };
}
