/**
 * The real `tidemark` binary scanning the hostile-file corpus (tests/helpers/hostileCorpus.ts) beside two
 * good files: every bad file gets verdict `error` with its stable code and a one-line message, or, where the
 * audio present can be measured, a finding naming the damage; the good files are measured; the scan exits 1,
 * prints no stack trace and finishes within its time limit. (The FIFO and folder-loop cases are in
 * scanCommand.test.ts.)
 */
import { createHash } from "node:crypto";
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { Ajv2020 } from "ajv/dist/2020.js";
import { execa } from "execa";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { FileReport, ScanReport } from "../../shared/src/types/report.ts";
import { pinkNoise, sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { hostileCorpus, writeHostileCorpus } from "../helpers/hostileCorpus.ts";
import { binPath, isolatedEnv, repoRoot } from "./runCli.ts";

const corpus = hostileCorpus();
const isRoot = process.getuid?.() === 0;
const GOOD = ["good-hiss.bwf", "good-tone.wav"];
/** Far above the ~2 s a scan of this corpus takes: reaching it means something hung. */
const SCAN_TIMEOUT_MS = 45_000;

let dir: string;
const env = isolatedEnv();
const ajv = new Ajv2020({ allErrors: true, strict: true });
ajv.addFormat("date-time", true);
const validateReport = ajv.compile(JSON.parse(readFileSync(path.join(repoRoot, "shared", "schema", "report.schema.json"), "utf8")));

interface Scan {
  exitCode: number | undefined;
  timedOut: boolean;
  stdout: string;
  stderr: string;
}

async function scanCorpus(extra: string[]): Promise<Scan> {
  const r = await execa("node", [binPath, "scan", "corpus", "--format", "json", ...extra], {
    cwd: dir,
    env: { ...env, FORCE_COLOR: "0" },
    reject: false,
    stdin: "ignore",
    timeout: SCAN_TIMEOUT_MS,
    forceKillAfterDelay: 2000,
  });
  return { exitCode: r.exitCode, timedOut: r.timedOut, stdout: String(r.stdout), stderr: String(r.stderr) };
}

let scan: Scan;
let report: ScanReport;
const byPath = new Map<string, FileReport>();

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-hostile-"));
  const corpusDir = path.join(dir, "corpus");
  mkdirSync(corpusDir);
  writeHostileCorpus(corpusDir, corpus);
  const rate = 48000;
  // A −20 dBFS stereo 1 kHz sine: EBU Tech 3341 case 1 (−23 dBFS, −23 LUFS) 3 dB hotter.
  const left = sine({ frequencyHz: 1000, sampleRateHz: rate, seconds: 2, peakDbfs: -20 });
  writeFileSync(path.join(corpusDir, "good-tone.wav"), encodeWav([left, left], { sampleRateHz: rate, bitDepth: 24 }));
  const hiss = pinkNoise({ sampleRateHz: 44100, seconds: 2, rmsDbfs: -26, seed: 5 });
  writeFileSync(path.join(corpusDir, "good-hiss.bwf"), encodeWav([hiss], { sampleRateHz: 44100, bitDepth: 16, bext: { description: "Lighthouse Choir Reels, reel 2" } }));

  scan = await scanCorpus(["--workers", "2"]);
  report = JSON.parse(scan.stdout) as ScanReport;
  for (const f of report.files) byPath.set(f.path, f);
}, SCAN_TIMEOUT_MS + 15_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

const sha256 = (bytes: Uint8Array): string => createHash("sha256").update(bytes).digest("hex");

describe("tidemark scan over the hostile corpus (real binary)", () => {
  it("finishes in time, exits 1, prints no stack trace, and writes a report that validates against the schema", () => {
    expect(scan.timedOut).toBe(false);
    expect(scan.exitCode).toBe(1);
    expect(scan.stderr).not.toMatch(/^\s+at /m);
    // Only the one-line notes of what could not be measured.
    for (const line of scan.stderr.split("\n").filter(Boolean)) expect(line).toMatch(/^tidemark: [a-z-]+: /);
    expect(validateReport(report), JSON.stringify(validateReport.errors)).toBe(true);
  });

  it("reports every file of the corpus, and nothing else", () => {
    expect([...byPath.keys()].sort()).toEqual([...corpus.cases.map((c) => c.name), ...GOOD].sort());
    const errors = corpus.cases.filter((c) => "error" in c.scan).length;
    expect(report.summary).toMatchObject({ files: corpus.cases.length + GOOD.length, error: errors });
  });

  it.each(corpus.cases)("$name ($what)", (c) => {
    const f = byPath.get(c.name);
    expect(f, `${c.name} missing from the report`).toBeDefined();
    const file = f as FileReport;
    if ("error" in c.scan) {
      expect(file).toMatchObject({ verdict: "error", sha256: null, metrics: null, error: { code: c.scan.error } });
      expect(file.error?.message).toMatch(c.scan.message);
      expect(file.error?.message).not.toMatch(/[\r\n]/);
      expect(file.error?.message).not.toContain(dir);
      expect(file.findings.map((x) => x.code)).toEqual(["unreadable"]);
      return;
    }
    // Measured: a real hash of the bytes, the duration of the audio present, and the damage named (or none).
    expect(file.error).toBeNull();
    expect(file.verdict).not.toBe("error");
    expect(file.metrics).not.toBeNull();
    expect(file.sha256).toBe(sha256(c.bytes ?? new Uint8Array(0)));
    expect(file.format?.durationSeconds).toBeCloseTo(c.scan.durationSeconds, 9);
    const damage = file.findings.filter((x) => x.code === "truncated" || x.code === "non-finite-samples");
    if ("finding" in c.scan) {
      expect(damage.map((x) => x.code)).toEqual([c.scan.finding]);
      expect(damage[0].message).toMatch(c.scan.message);
      expect(damage[0].severity).toBe("fail");
    } else {
      expect(damage).toEqual([]);
    }
  });

  // As root, a chmod 000 file is still readable (CAP_DAC_OVERRIDE), so the corpus leaves it out and this
  // one case cannot be tested; run the suite as an ordinary user to cover it.
  it.skipIf(isRoot)("an unreadable (chmod 000) file gets permission-denied", () => {
    expect(byPath.get("unreadable.wav")?.error?.code).toBe("permission-denied");
  });

  it("says which cases were left out on this machine, and why", () => {
    expect(corpus.skipped.map((s) => s.name)).toEqual(isRoot ? ["unreadable.wav"] : []);
  });

  it("measures the two good files beside them normally", () => {
    const tone = byPath.get("good-tone.wav");
    expect(tone).toMatchObject({ verdict: "pass", error: null, format: { container: "wav", sampleRateHz: 48000, bitDepth: 24, channels: 2, durationSeconds: 2 } });
    // A sine's sample peak is its amplitude: −20 dBFS within quantisation.
    expect(tone?.metrics?.samplePeakDbfs).toBeCloseTo(-20, 1);
    const hiss = byPath.get("good-hiss.bwf");
    expect(hiss).toMatchObject({ verdict: "pass", error: null, format: { container: "bwf", sampleRateHz: 44100, durationSeconds: 2 } });
    expect(hiss?.metadata.bext?.description).toBe("Lighthouse Choir Reels, reel 2");
  });

  it("gives the same report on one worker (main thread) as on two (worker threads), minus timestamps", async () => {
    const single = await scanCorpus(["--workers", "1"]);
    expect(single.timedOut).toBe(false);
    expect(single.exitCode).toBe(1);
    const strip = (text: string) => ({ ...(JSON.parse(text) as ScanReport), startedAt: null, finishedAt: null });
    expect(strip(single.stdout)).toEqual(strip(scan.stdout));
  }, SCAN_TIMEOUT_MS + 5_000);
});
