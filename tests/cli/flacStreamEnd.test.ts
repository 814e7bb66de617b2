/**
 * The end of a FLAC stream (shared/src/flac/flacFramer.ts `finish()` with libFLAC in cli/src/audio): the last
 * frame has no next header to show where it ends, so damage near the end used to read as trailing data and
 * truncation. A real file is made here by Debian's flac (`flac -8`, 4096-sample frames, the last one short);
 * Debian's flac is the outside reference for everything checked:
 * - frame offsets and block sizes from its analysis mode (`flac -a`), the total from STREAMINFO (`metaflac
 *   --show-total-samples`, `--show-min-framesize`);
 * - `flac -t` accepts the intact file and turns down every damaged one (the damage is real);
 * - the samples of every undamaged frame equal `flac -d`'s decode of the intact file, and, up to the damaged
 *   frame, `flac -d -F`'s decode of the damaged file itself (its decode-through-errors mode).
 * A byte flipped in a frame must give exactly one decode-error with that frame's time, and no trailing-data or
 * truncated finding; a file cut inside a frame must give its truncated finding from that frame's start.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFlacStreamDecoder } from "../../cli/src/audio/flacStreamDecoder.ts";
import { loadProfile } from "../../cli/src/profiles/loadProfile.ts";
import { analyseFile, type ScanContext } from "../../cli/src/scan/analyseFile.ts";
import { readFlacLayout } from "../../shared/src/flac/flacLayout.ts";
import type { Finding } from "../../shared/src/types/report.ts";
import { byteSourceFromBytes } from "../../shared/src/wav/byteSource.ts";
import { mix, pinkNoise, sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";

const hasFlac = ["flac", "metaflac"].every((t) => spawnSync(t, ["--version"], { stdio: "ignore" }).status === 0);
const RATE = 48000;
/**
 * 17 frames of 4096 samples (flac -8's block size) and a short last one of 700, as most files end: a damaged
 * frame and a short last frame together fit in the framer's frame-length bound, where the old rule went wrong.
 */
const TOTAL = 17 * 4096 + 700;
const FULL = 2 ** 23;

interface FrameInfo {
  offset: number;
  bytes: number;
  start: number;
  blockSize: number;
}

let dir: string;
let intact: Uint8Array;
let frames: FrameInfo[];
/** flac -d of the intact file: interleaved stereo 24-bit codes. */
let reference: Int32Array;
let minFrameSize: number;
let context: ScanContext;

const file = (name: string): string => path.join(dir, name);

/** Signed 24-bit little-endian interleaved raw PCM (flac --force-raw-format) as integer codes. */
function rawCodes(bytes: Uint8Array): Int32Array {
  const out = new Int32Array(bytes.length / 3);
  for (let i = 0, j = 0; i < out.length; i++, j += 3) out[i] = ((bytes[j] | (bytes[j + 1] << 8) | (bytes[j + 2] << 16)) << 8) >> 8;
  return out;
}

function flacDecode(name: string, throughErrors: boolean): Int32Array {
  const raw = file(`${name}.raw`);
  spawnSync("flac", ["-s", "-d", "-f", ...(throughErrors ? ["-F"] : []), "--force-raw-format", "--endian=little", "--sign=signed", file(name), "-o", raw]);
  return rawCodes(new Uint8Array(readFileSync(raw)));
}

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-flac-end-"));
  const loaded = await loadProfile("preservation-master", dir);
  context = { profile: loaded.profile, settings: loaded.settings, spectrograms: null, fingerprint: false, closeups: false };
  if (!hasFlac) return;
  const seconds = TOTAL / RATE;
  const left = mix(pinkNoise({ sampleRateHz: RATE, seconds, rmsDbfs: -20, seed: 3 }), sine({ frequencyHz: 997, sampleRateHz: RATE, seconds, peakDbfs: -12 }));
  const right = pinkNoise({ sampleRateHz: RATE, seconds, rmsDbfs: -24, seed: 4 });
  expect(left.length).toBe(TOTAL);
  writeFileSync(file("src.wav"), encodeWav([left, right], { sampleRateHz: RATE, bitDepth: 24 }));
  execFileSync("flac", ["-s", "-f", "-8", file("src.wav"), "-o", file("intact.flac")]);
  intact = new Uint8Array(readFileSync(file("intact.flac")));
  // flac -a: one line per frame, "frame=N offset=O bits=B blocksize=S ..." (Debian's flac analysis mode).
  execFileSync("flac", ["-s", "-a", "-f", file("intact.flac"), "-o", file("intact.ana")]);
  frames = [];
  let start = 0;
  for (const m of readFileSync(file("intact.ana"), "latin1").matchAll(/^frame=\d+\toffset=(\d+)\tbits=(\d+)\tblocksize=(\d+)/gm)) {
    frames.push({ offset: Number(m[1]), bytes: Number(m[2]) / 8, start, blockSize: Number(m[3]) });
    start += Number(m[3]);
  }
  reference = flacDecode("intact.flac", false);
  minFrameSize = Number(execFileSync("metaflac", ["--show-min-framesize", file("intact.flac")], { encoding: "utf8" }).trim());
}, 60_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

interface Decoded {
  codes: Int32Array;
  findings: Finding[];
  trailingBytes: number;
  framesDecoded: number;
}

async function decode(bytes: Uint8Array): Promise<Decoded> {
  const layout = await readFlacLayout(byteSourceFromBytes(bytes));
  const codes = new Int32Array(layout.totalFrames * 2);
  const decoder = await createFlacStreamDecoder(layout, 4096, (block) => {
    for (let c = 0; c < 2; c++) {
      const x = block.channels[c];
      for (let i = 0; i < block.frames; i++) codes[2 * (block.startFrame + i) + c] = Math.round(x[i] * FULL);
    }
  });
  for (let at = 0; at < bytes.length; at += 65536) await decoder.push(bytes.subarray(at, Math.min(bytes.length, at + 65536)), at);
  await decoder.finish();
  return { codes, findings: decoder.findings, trailingBytes: decoder.trailingBytes, framesDecoded: decoder.framesDecoded };
}

const samplesOf = (codes: Int32Array, f: FrameInfo): Int32Array => codes.subarray(2 * f.start, 2 * (f.start + f.blockSize));
const flipped = (at: number, xor: number): Uint8Array => {
  const b = intact.slice();
  b[at] ^= xor;
  return b;
};

/** Exactly frame `n` lost: one decode-error with its time, silence there, every other frame as flac decoded it. */
function expectOnlyFrameLost(d: Decoded, n: number, where: string): void {
  const f = frames[n];
  const errors = d.findings.filter((x) => x.code === "decode-error");
  expect(errors, where).toHaveLength(1);
  expect(errors[0].startSeconds, where).toBeCloseTo(f.start / RATE, 9);
  expect(errors[0].endSeconds, where).toBeCloseTo((f.start + f.blockSize) / RATE, 9);
  expect(d.findings.map((x) => x.code), where).not.toContain("truncated");
  expect(d.trailingBytes, where).toBe(0);
  expect(d.framesDecoded, where).toBe(TOTAL);
  expect(samplesOf(d.codes, f).every((x) => x === 0), where).toBe(true);
  for (let k = 0; k < frames.length; k++) {
    if (k !== n && !equalCodes(samplesOf(d.codes, frames[k]), samplesOf(reference, frames[k]))) expect.fail(`${where}: frame ${k} differs from flac -d`);
  }
}

function equalCodes(a: Int32Array, b: Int32Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

describe.runIf(hasFlac)("the end of a FLAC stream (Debian's flac as the reference)", () => {
  it("the file is what flac says: frames from flac -a add up to STREAMINFO's total, flac -t passes, our decode equals flac -d with no finding", async () => {
    expect(Number(execFileSync("metaflac", ["--show-total-samples", file("intact.flac")], { encoding: "utf8" }).trim())).toBe(TOTAL);
    expect(frames.length).toBe(18);
    expect(frames.at(-1)!.blockSize).toBe(700);
    expect(frames.at(-1)!.offset + frames.at(-1)!.bytes).toBe(intact.length);
    expect(spawnSync("flac", ["-s", "-t", file("intact.flac")]).status).toBe(0);
    const d = await decode(intact);
    expect(d.findings).toEqual([]);
    expect(d.trailingBytes).toBe(0);
    expect(equalCodes(d.codes, reference)).toBe(true);
  });

  // Every 41st byte of the frame after its sync code, flipped alone: a chance CRC-16 zero (1 in 65536 per byte)
  // in the short last frame made some of these read as trailing data and truncation before the fix.
  it.each([
    ["second-to-last", 16],
    ["last", 17],
    ["first", 0],
  ])("a byte flipped anywhere in the %s frame: only that frame is lost, at its time; no trailing-data, no truncated", async (_, n) => {
    const f = frames[n];
    let checked = 0;
    for (let at = f.offset + 2, k = 0; at < f.offset + f.bytes; at += 41, k++) {
      const bytes = flipped(at, k % 2 === 0 ? 0xff : 0x01);
      expectOnlyFrameLost(await decode(bytes), n, `byte ${at - f.offset} of frame ${n}`);
      checked++;
    }
    expect(checked).toBeGreaterThan(30);
  }, 120_000);

  it.each([
    ["second-to-last", 16],
    ["last", 17],
    ["first", 0],
  ])("the %s frame's sync code damaged (lost sync): only that frame is lost; flac -t fails, flac -d -F agrees up to it", async (_, n) => {
    const f = frames[n];
    for (const [at, xor] of [
      [f.offset, 0xff],
      [f.offset + 1, 0x04],
    ]) {
      const bytes = flipped(at, xor);
      const name = `sync-${n}-${at - f.offset}.flac`;
      writeFileSync(file(name), bytes);
      expect(spawnSync("flac", ["-s", "-t", file(name)]).status).not.toBe(0);
      const d = await decode(bytes);
      expectOnlyFrameLost(d, n, `sync byte ${at - f.offset} of frame ${n}`);
      const through = flacDecode(name, true);
      expect(equalCodes(d.codes.subarray(0, 2 * f.start), through.subarray(0, 2 * f.start))).toBe(true);
    }
  });

  it("a damaged second-to-last frame, scanned: the report has the decode-error and the full duration, no trailing-data or truncated", async () => {
    const f = frames[16];
    const last = frames[17];
    // A flip for which the CRC-16 run on from the damaged frame's start comes to 0 inside the last frame: the
    // old rule ended the stream there and called the rest trailing data (RFC 9639, 9.3's CRC, bit by bit here).
    let at = -1;
    for (let p = f.offset + 100; p < f.offset + f.bytes && at < 0; p += 7) {
      const bytes = flipped(p, 0xff);
      let c = 0;
      for (let i = f.offset; i < bytes.length; i++) {
        c ^= bytes[i] << 8;
        for (let k = 0; k < 8; k++) c = c & 0x8000 ? ((c << 1) ^ 0x8005) & 0xffff : (c << 1) & 0xffff;
        if (c === 0 && i > last.offset + 8 && i + 1 < bytes.length) at = p;
      }
    }
    expect(at).toBeGreaterThan(0);
    writeFileSync(file("scan.flac"), flipped(at, 0xff));
    const { report } = await analyseFile({ absPath: file("scan.flac"), relPath: "scan.flac", sizeBytes: intact.length }, context);
    expect(report.error).toBeNull();
    expect(report.format?.durationSeconds).toBeCloseTo(TOTAL / RATE, 9);
    const codes = report.findings.map((x) => x.code);
    expect(codes).not.toContain("trailing-data");
    expect(codes).not.toContain("truncated");
    const errors = report.findings.filter((x) => x.code === "decode-error");
    expect(errors).toHaveLength(1);
    expect(errors[0].startSeconds).toBeCloseTo(f.start / RATE, 9);
    expect(codes).toContain("flac-md5-mismatch");
  });

  it("a file cut inside a frame (including the last and inside a header): truncated from that frame's start, no decode-error or trailing-data", async () => {
    const cuts: [number, number][] = [];
    for (const n of [5, 16, 17]) {
      const f = frames[n];
      for (const into of [3, 9, 200, Math.floor(f.bytes / 2), f.bytes - 1]) cuts.push([n, f.offset + into]);
    }
    for (const [n, at] of cuts) {
      const bytes = intact.slice(0, at);
      const where = `cut at byte ${at - frames[n].offset} of frame ${n}`;
      const d = await decode(bytes);
      const cut = d.findings.find((x) => x.code === "truncated");
      expect(cut?.severity, where).toBe("fail");
      expect(cut!.startSeconds, where).toBeCloseTo(frames[n].start / RATE, 9);
      expect(cut!.endSeconds, where).toBeCloseTo(TOTAL / RATE, 9);
      expect(d.findings.filter((x) => x.code === "decode-error"), where).toEqual([]);
      expect(d.trailingBytes, where).toBe(0);
      expect(equalCodes(d.codes.subarray(0, 2 * frames[n].start), reference.subarray(0, 2 * frames[n].start)), where).toBe(true);
    }
    // STREAMINFO's smallest frame is what tells a cut last frame from a damaged one.
    expect(minFrameSize).toBeGreaterThan(0);
  });

  it.each([
    ["zero bytes", new Uint8Array(1000)],
    ["an ID3v1-sized tag", new Uint8Array(128).fill(0x41)],
    ["0xFF bytes", new Uint8Array(50).fill(0xff)],
  ])("bytes appended after the last frame (%s) are trailing data, counted exactly; the audio is whole", async (_, tail) => {
    const d = await decode(new Uint8Array([...intact, ...tail]));
    expect(d.trailingBytes).toBe(tail.length);
    expect(d.findings).toEqual([]);
    expect(equalCodes(d.codes, reference)).toBe(true);
  });
});
