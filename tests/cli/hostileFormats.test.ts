/**
 * Hostile AIFF, AIFF-C and FLAC headers (truncated, lying sizes, zero channels or rate, unknown codings) and
 * seeded random header mutations: each ends as a report with a stable error code from WAV_ERROR_CODES, or a
 * measured report naming the damage; nothing throws past analyseFile. The AIFF bytes come from a writer here
 * laid out per Apple's AIFF 1.3 / AIFF-C specification; the FLAC from Debian's flac.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { loadProfile } from "../../cli/src/profiles/loadProfile.ts";
import { analyseFile, type ScanContext } from "../../cli/src/scan/analyseFile.ts";
import type { FileReport } from "../../shared/src/types/report.ts";
import { WAV_ERROR_CODES } from "../../shared/src/wav/errors.ts";
import { seededRandom, sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";

const hasFlac = spawnSync("flac", ["--version"], { stdio: "ignore" }).status === 0;
let dir: string;
let context: ScanContext;

const ascii = (s: string): number[] => Array.from(s, (c) => c.charCodeAt(0));
const be32 = (v: number): number[] => [(v >>> 24) & 255, (v >>> 16) & 255, (v >>> 8) & 255, v & 255];
const be16 = (v: number): number[] => [(v >>> 8) & 255, v & 255];
/** 80-bit extended of an integer rate: exponent 16383 + 63 − leading zeros, mantissa normalised (AIFF 1.3). */
function extended(rate: number): number[] {
  if (rate === 0) return new Array(10).fill(0);
  let e = 16383 + 63;
  let m = BigInt(rate);
  while (!(m & (1n << 63n))) {
    m <<= 1n;
    e--;
  }
  const bytes = [(e >> 8) & 0x7f, e & 255];
  for (let i = 7; i >= 0; i--) bytes.push(Number((m >> BigInt(i * 8)) & 255n));
  return bytes;
}

interface AiffOptions {
  channels?: number;
  rate?: number;
  frames?: number;
  compression?: string;
  commSize?: number;
  ssndSize?: number;
}

/** 16-bit big-endian mono tone, 2000 frames at 8 kHz. */
function aiff(o: AiffOptions = {}): Uint8Array {
  const frames = 2000;
  const x = sine({ frequencyHz: 440, sampleRateHz: 8000, seconds: frames / 8000, peakDbfs: -6 });
  const data: number[] = [];
  for (const v of x) data.push(...be16(Math.round(v * 32767) & 0xffff));
  const isAifc = o.compression !== undefined;
  const comm = [...be16(o.channels ?? 1), ...be32(o.frames ?? frames), ...be16(16), ...extended(o.rate ?? 8000), ...(isAifc ? [...ascii(o.compression!), 0, 0] : [])];
  const ssnd = [...be32(0), ...be32(0), ...data];
  const chunks = [...ascii("COMM"), ...be32(o.commSize ?? comm.length), ...comm, ...ascii("SSND"), ...be32(o.ssndSize ?? ssnd.length), ...ssnd];
  return Uint8Array.from([...ascii("FORM"), ...be32(4 + chunks.length), ...ascii(isAifc ? "AIFC" : "AIFF"), ...chunks]);
}

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-hostile-formats-"));
  const loaded = await loadProfile("preservation-master", dir);
  context = { profile: loaded.profile, settings: loaded.settings, spectrograms: null, fingerprint: false, closeups: false };
  if (hasFlac) {
    const x = sine({ frequencyHz: 440, sampleRateHz: 8000, seconds: 2, peakDbfs: -6 });
    writeFileSync(path.join(dir, "src.wav"), encodeWav([x], { sampleRateHz: 8000, bitDepth: 16 }));
    execFileSync("flac", ["-s", "-f", "-b", "1152", path.join(dir, "src.wav"), "-o", path.join(dir, "src.flac")]);
  }
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function scanBytes(name: string, bytes: Uint8Array): Promise<FileReport> {
  writeFileSync(path.join(dir, name), bytes);
  const { report } = await analyseFile({ absPath: path.join(dir, name), relPath: name, sizeBytes: bytes.length }, context);
  return report;
}

describe("hostile AIFF and AIFF-C headers: a stable error code or a finding, never a crash", () => {
  it("the writer here makes a file that is measured (the baseline for the damaged ones)", async () => {
    const report = await scanBytes("good.aiff", aiff());
    expect(report.error).toBeNull();
    expect(report.format).toMatchObject({ container: "aiff", sampleRateHz: 8000, bitDepth: 16, channels: 1 });
    expect(report.format?.durationSeconds).toBeCloseTo(0.25, 9);
  });

  it.each([
    ["truncated-in-comm.aiff", "truncated", aiff().slice(0, 26), /ends inside the "COMM" chunk/],
    ["truncated-form.aiff", "truncated", aiff().slice(0, 10), /FORM header/],
    ["comm-size-lies.aiff", "truncated", aiff({ commSize: 0x7ffffff0 }), /COMM.*claims 2147483632 bytes/],
    ["comm-too-small.aiff", "bad-fmt-chunk", aiff({ commSize: 10 }), /COMM chunk is 10 bytes; at least 18 expected/],
    ["zero-channels.aiff", "bad-channel-count", aiff({ channels: 0 }), /^0 channels/],
    ["zero-rate.aiff", "bad-sample-rate", aiff({ rate: 0 }), /sample rate 0 Hz/],
    ["ima4.aifc", "unsupported-encoding", aiff({ compression: "ima4" }), /"ima4" is not supported/],
    ["form-8svx.aiff", "not-wave", Uint8Array.from([...ascii("FORM"), ...be32(4), ...ascii("8SVX")]), /"8SVX"; "AIFF" or "AIFC" expected/],
  ])("%s → %s", async (name, code, bytes, message) => {
    const report = await scanBytes(name, bytes);
    expect(report.verdict).toBe("error");
    expect(report.error?.code).toBe(code);
    expect(report.error?.message).toMatch(message);
  });

  it("an SSND size past the end: measured on what is there, with a truncated finding", async () => {
    const report = await scanBytes("ssnd-lies.aiff", aiff({ ssndSize: 0x00ffffff, frames: 4000 }));
    expect(report.error).toBeNull();
    expect(report.findings.find((f) => f.code === "truncated")?.severity).toBe("fail");
    expect(report.format?.durationSeconds).toBeCloseTo(0.25, 9);
  });

  it("COMM with zero frames: no-audio, fail", async () => {
    const report = await scanBytes("no-frames.aiff", aiff({ frames: 0 }));
    expect(report.findings.find((f) => f.code === "no-audio")?.severity).toBe("fail");
    expect(report.verdict).toBe("fail");
  });
});

describe.runIf(hasFlac)("hostile FLAC headers", () => {
  const flac = (): Uint8Array => Uint8Array.from(readFileSync(path.join(dir, "src.flac")));
  // STREAMINFO body starts at byte 8 ("fLaC" + block header); sample rate in its bytes 10–12 (RFC 9639, 8.2).
  const edit = (f: (b: Uint8Array) => void): Uint8Array => {
    const b = flac();
    f(b);
    return b;
  };

  it.each([
    ["marker-only.flac", "truncated", () => Uint8Array.from(ascii("fLaC")), /metadata block header/],
    ["streaminfo-cut.flac", "truncated", () => flac().slice(0, 20), /inside metadata block 0/],
    ["block-length-lies.flac", "truncated", () => edit((b) => b.set([0x7f, 0xff, 0xff], 5)), /claims 8388607 bytes/],
    ["zero-rate.flac", "bad-sample-rate", () => edit((b) => { b[18] = 0; b[19] = 0; b[20] &= 0x0f; }), /sample rate 0 Hz/],
    ["no-streaminfo.flac", "no-fmt-chunk", () => Uint8Array.from([...ascii("fLaC"), 0x84, 0, 0, 0]), /no STREAMINFO/],
    ["id3-then-nothing.flac", "truncated", () => Uint8Array.from([...ascii("ID3"), 4, 0, 0, 0, 0, 0, 0]), /before the "fLaC" marker/],
  ])("%s → %s", async (name, code, make, message) => {
    const report = await scanBytes(name, make());
    expect(report.error?.code).toBe(code);
    expect(report.error?.message).toMatch(message);
  });

  it("STREAMINFO says 8 channels but the frames say 1: every frame lost, reported, no crash", async () => {
    const report = await scanBytes("channels-lie.flac", edit((b) => { b[20] = (b[20] & 0xf1) | (7 << 1); }));
    expect(report.error).toBeNull();
    expect(report.findings.some((f) => f.code === "decode-error" || f.code === "truncated")).toBe(true);
    expect(report.verdict).toBe("fail");
  });

  it("STREAMINFO total samples unset (0): the length comes from the last frame header", async () => {
    const report = await scanBytes("total-unknown.flac", edit((b) => { b[21] &= 0xf0; b.fill(0, 22, 26); }));
    expect(report.error).toBeNull();
    expect(report.format?.durationSeconds).toBeCloseTo(2, 9);
  });

  it("bytes after the last frame: trailing-data with the count", async () => {
    const b = flac();
    const report = await scanBytes("trailing.flac", Uint8Array.from([...b, ...new Uint8Array(777).fill(0x55)]));
    expect(report.findings.find((f) => f.code === "trailing-data")?.message).toMatch(/^777 byte/);
    expect(report.findings.map((f) => f.code)).not.toContain("flac-md5-mismatch");
  });
});

describe("seeded random header mutations of AIFF-C and FLAC: only stable codes or measured reports", () => {
  it("300 mutants", async () => {
    const rnd = seededRandom(17);
    const bases: Uint8Array[] = [aiff(), aiff({ compression: "sowt" })];
    if (hasFlac) bases.push(Uint8Array.from(readFileSync(path.join(dir, "src.flac"))));
    const codes = new Set<string>(WAV_ERROR_CODES);
    for (let i = 0; i < 300; i++) {
      const b = Uint8Array.from(bases[i % bases.length]);
      const edits = 1 + Math.floor(rnd() * 4);
      for (let k = 0; k < edits; k++) b[Math.floor(rnd() * Math.min(96, b.length))] = Math.floor(rnd() * 256);
      const cut = rnd() < 0.2 ? Math.floor(rnd() * b.length) : b.length;
      const report = await scanBytes(`mutant-${i}`, b.subarray(0, cut));
      if (report.error) expect(codes.has(report.error.code), `${report.error.code}: ${report.error.message}`).toBe(true);
      else expect(report.metrics).not.toBeNull();
    }
  }, 120_000);
});
