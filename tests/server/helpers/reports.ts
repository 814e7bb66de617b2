/** Valid reports of the "tidemark.report/1" contract, built in code, plus PNG bytes and an ingest call. */
import { PNG } from "pngjs";
import request from "supertest";
import type { Express } from "express";
import type { Finding, FileReport, ScanReport, Verdict } from "@tidemark/shared/types/report";
import { createHash } from "node:crypto";

export interface FileSpec {
  path: string;
  sha256?: string | null;
  verdict?: Verdict;
  findings?: Finding[];
  durationSeconds?: number;
  integratedLufs?: number | null;
  truePeakDbtp?: number | null;
}

export const sha = (s: string): string => createHash("sha256").update(s).digest("hex");

export function fileReport(spec: FileSpec): FileReport {
  return {
    path: spec.path,
    sizeBytes: 1_234_567,
    sha256: spec.sha256 === undefined ? sha(spec.path) : spec.sha256,
    format: { container: "bwf", encoding: "pcm", sampleRateHz: 96_000, bitDepth: 24, channels: 2, durationSeconds: spec.durationSeconds ?? 60 },
    metadata: { bext: undefined, info: { INAM: spec.path } },
    metrics: {
      samplePeakDbfs: -1.5,
      truePeakDbtp: spec.truePeakDbtp === undefined ? -1.2 : spec.truePeakDbtp,
      rmsDbfs: -20,
      integratedLufs: spec.integratedLufs === undefined ? -23 : spec.integratedLufs,
      loudnessRangeLu: 6.5,
      maxMomentaryLufs: -15,
      maxShortTermLufs: -18,
      clippedSamples: 0,
      clipEvents: 0,
      dcOffsetPercent: 0.01,
      bandwidthHz: 20_000,
      dominantFrequencyHz: 440,
      noiseFloorDbfs: -80,
      stereoCorrelation: 0.9,
      effectiveBitDepth: 24,
      bands: { octave: [{ centerHz: 1000, db: -20 }], third: [{ centerHz: 1000, db: -22 }] },
      channels: [
        { samplePeakDbfs: -1.5, truePeakDbtp: -1.2, rmsDbfs: -20, dcOffsetPercent: 0.01, clippedSamples: 0 },
        { samplePeakDbfs: -1.6, truePeakDbtp: -1.3, rmsDbfs: -20.5, dcOffsetPercent: 0.01, clippedSamples: 0 },
      ],
    },
    findings: spec.findings ?? [],
    verdict: spec.verdict ?? "pass",
    error: null,
    spectrogram: null,
  };
}

export function finding(code: Finding["code"], severity: Finding["severity"], startSeconds: number | null = 1.5): Finding {
  return { code, severity, channel: 0, startSeconds, endSeconds: startSeconds === null ? null : startSeconds + 0.5, message: `${code} found` };
}

export function scanReport(files: FileSpec[]): ScanReport {
  const reports = files.map(fileReport);
  const count = (v: Verdict) => reports.filter((f) => f.verdict === v).length;
  return {
    schema: "tidemark.report/1",
    tool: { name: "tidemark", version: "0.1.0-test" },
    profile: { name: "preservation-master", hash: "abc123" },
    startedAt: "2026-12-01T09:00:00.000Z",
    finishedAt: "2026-12-01T09:05:00.000Z",
    summary: { files: reports.length, pass: count("pass"), warn: count("warn"), fail: count("fail"), error: count("error") },
    files: reports,
  };
}

export function pngBytes(width = 4, height = 2): Buffer {
  const png = new PNG({ width, height });
  png.data.fill(0x80);
  return PNG.sync.write(png);
}

export interface IngestPart {
  /** A part kind of server/src/services/ingestValidation.ts PART_KINDS (spectrogram, waveform, levelGrid, …). */
  field: string;
  name: string;
  bytes: Buffer;
}

const PART_TYPES: Record<string, string> = { png: "image/png", json: "application/json", flac: "audio/flac", wav: "audio/wav" };

export function ingest(
  app: Express,
  token: string | null,
  body: { collection?: string; batchKey?: string; report?: ScanReport | string; images?: IngestPart[] },
): request.Test {
  let req = request(app).post("/api/ingest");
  if (token) req = req.set("Authorization", `Bearer ${token}`);
  if (body.collection !== undefined) req = req.field("collection", body.collection);
  if (body.batchKey !== undefined) req = req.field("batchKey", body.batchKey);
  if (body.report !== undefined) {
    const json = typeof body.report === "string" ? body.report : JSON.stringify(body.report);
    req = req.attach("report", Buffer.from(json), { filename: "report.json", contentType: "application/json" });
  }
  for (const image of body.images ?? []) {
    const ext = image.name.split(".").pop()!.toLowerCase();
    req = req.attach(image.field, image.bytes, { filename: image.name, contentType: PART_TYPES[ext] ?? "application/octet-stream" });
  }
  return req;
}
