/** One file through the composition in-process: reader → both analysers → judge → PNGs, and its error paths. */
import { createHash } from "node:crypto";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { PNG } from "pngjs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { hardClip, mix, sine, whiteNoise } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { loadProfile } from "../../cli/src/profiles/loadProfile.ts";
import { analyseFile, type ScanContext } from "../../cli/src/scan/analyseFile.ts";
import { fileMetricsSchema, fileReportSchema } from "../../shared/src/types/report.ts";

let dir: string;
let context: ScanContext;

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-analyse-"));
  const rate = 48000;
  const x = mix(hardClip(sine({ frequencyHz: 440, sampleRateHz: rate, seconds: 1.5, peakDbfs: 3 })), whiteNoise({ sampleRateHz: rate, seconds: 1.5, rmsDbfs: -60, seed: 2 }));
  writeFileSync(path.join(dir, "clipped.wav"), encodeWav([x, x], { sampleRateHz: rate, bitDepth: 24 }));
  writeFileSync(path.join(dir, "text.wav"), "not audio at all");
  const loaded = await loadProfile("preservation-master", dir);
  context = { profile: loaded.profile, settings: { ...loaded.settings, spectrogram: { ...loaded.settings.spectrogram, width: 400, height: 200 } }, spectrograms: { dirAbs: path.join(dir, "png"), dirShown: "png" }, fingerprint: true, closeups: true };
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("analyseFile", () => {
  it("merges both analysers into a contract-shaped report, judged by the profile", async () => {
    const bytes = readFileSync(path.join(dir, "clipped.wav"));
    const { report, audioSeconds } = await analyseFile({ absPath: path.join(dir, "clipped.wav"), relPath: "clipped.wav", sizeBytes: bytes.length }, context);
    expect(fileReportSchema.safeParse(JSON.parse(JSON.stringify(report))).success).toBe(true);
    // Every FileMetrics field, in the contract's order, from one of the two analysers.
    expect(Object.keys(report.metrics!)).toEqual(Object.keys(fileMetricsSchema.shape));
    expect(report.sha256).toBe(createHash("sha256").update(bytes).digest("hex"));
    expect(audioSeconds).toBeCloseTo(1.5, 6);
    expect(report.verdict).toBe("fail");
    expect(report.findings.filter((f) => f.code === "clipping").every((f) => f.severity === "fail")).toBe(true);
    const starts = report.findings.map((f) => f.startSeconds ?? -1);
    expect(starts).toEqual([...starts].sort((a, b) => a - b));
    // A 440 Hz tone puts its strongest peak near 440 Hz (within a few bins).
    expect(Math.abs(report.metrics!.dominantFrequencyHz! - 440)).toBeLessThan(30);
  });

  it("writes the spectrogram at the profile's size and the waveform strip beside it (decoded by pngjs)", async () => {
    const { report } = await analyseFile({ absPath: path.join(dir, "clipped.wav"), relPath: "clipped.wav", sizeBytes: 0 }, context);
    expect(report.spectrogram).toBe("png/clipped.wav.png");
    const png = PNG.sync.read(readFileSync(path.join(dir, "png", "clipped.wav.png")));
    expect([png.width, png.height]).toEqual([400, 200]);
    expect(PNG.sync.read(readFileSync(path.join(dir, "png", "clipped.wav.waveform.png"))).width).toBe(400);
  });

  it.each([
    ["text.wav", "not-riff"],
    ["absent.wav", "not-found"],
  ])("gives %s verdict error with code %s and a relative one-line message", async (name, code) => {
    const { report } = await analyseFile({ absPath: path.join(dir, name), relPath: `reels/${name}`, sizeBytes: 16 }, context);
    expect(report).toMatchObject({ verdict: "error", sha256: null, metrics: null, spectrogram: null, sizeBytes: 16, error: { code } });
    expect(report.error!.message).not.toContain(dir);
    expect(report.error!.message).not.toContain("\n");
    expect(report.findings.map((f) => f.code)).toEqual(["unreadable"]);
  });
});
