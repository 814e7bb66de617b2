/**
 * Frame boundaries of the FLAC reader (shared/src/flac/flacFramer.ts with libFLAC in cli/src/audio): streams
 * built here frame by frame per RFC 9639 (mono, 16-bit, 48 kHz, 256-sample VERBATIM frames, so every sample's
 * two bytes sit in the frame as written), with a false sync code planted in the audio: a header that passes its
 * CRC-8 and carries the next frame's number. Debian's `flac -t` / `flac -d` are the outside reference: they
 * must accept the undamaged stream and decode exactly the planted samples. Damage (a flipped byte, a broken
 * header, bytes between frames) must come out as decode-error findings at the damaged frame's time, lost audio
 * as silence of its exact length, and every other frame's samples unchanged.
 */
import { createHash } from "node:crypto";
import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFlacStreamDecoder } from "../../cli/src/audio/flacStreamDecoder.ts";
import { readFlacLayout } from "../../shared/src/flac/flacLayout.ts";
import { byteSourceFromBytes } from "../../shared/src/wav/byteSource.ts";
import type { Finding } from "../../shared/src/types/report.ts";

const hasFlac = spawnSync("flac", ["--version"], { stdio: "ignore" }).status === 0;
const RATE = 48000;
const BLOCK = 256;
const FRAMES = 24;
/** The frame whose audio holds the false sync code, and where in it (sample index). */
const FALSE_SYNC_FRAME = 9;
const FALSE_SYNC_SAMPLE = 100;

// CRC-8 (poly 0x07) and CRC-16 (poly 0x8005), MSB first, initial 0: RFC 9639, 9.1.8 and 9.3, bit by bit.
function crc(bytes: Uint8Array, width: 8 | 16): number {
  const poly = width === 8 ? 0x07 : 0x8005;
  const top = 1 << (width - 1);
  const mask = (1 << width) - 1;
  let c = 0;
  for (const byte of bytes) {
    c ^= byte << (width - 8);
    for (let k = 0; k < 8; k++) c = c & top ? ((c << 1) ^ poly) & mask : (c << 1) & mask;
  }
  return c;
}

/** Frame header for frame `n` (< 128): fixed block size 256 (code 8), 48 kHz (code 10), mono, 16 bits (RFC 9639, 9.1). */
function frameHeader(n: number): Uint8Array {
  const h = Uint8Array.of(0xff, 0xf8, 0x8a, 0x08, n, 0);
  h[5] = crc(h.subarray(0, 5), 8);
  return h;
}

function samplesOf(n: number, falseSyncFrame: number | null): Int16Array {
  const s = new Int16Array(BLOCK);
  for (let i = 0; i < BLOCK; i++) s[i] = Math.round(9000 * Math.sin(((n * BLOCK + i) * 2 * Math.PI * 441) / RATE) + 700 * Math.sin(n * 7 + i * 1.3));
  if (n === falseSyncFrame) {
    // Three samples whose big-endian bytes are the next frame's header: FF F8 8A 08 n+1 CRC-8.
    const h = frameHeader(n + 1);
    for (let k = 0; k < 3; k++) s[FALSE_SYNC_SAMPLE + k] = (h[2 * k] << 8) | h[2 * k + 1];
  }
  return s;
}

/** One frame: header, a VERBATIM subframe (0x02, RFC 9639, 9.2.1), the samples big-endian, CRC-16. */
function frameBytes(n: number, s: Int16Array): Uint8Array {
  const f = new Uint8Array(6 + 1 + 2 * BLOCK + 2);
  f.set(frameHeader(n), 0);
  f[6] = 0x02;
  const v = new DataView(f.buffer);
  for (let i = 0; i < BLOCK; i++) v.setInt16(7 + 2 * i, s[i]);
  v.setUint16(f.length - 2, crc(f.subarray(0, f.length - 2), 16));
  return f;
}

interface Stream {
  bytes: Uint8Array;
  /** File offset of each frame. */
  offsets: number[];
  samples: Int16Array;
}

function buildStream(falseSyncFrame: number | null): Stream {
  const samples = new Int16Array(FRAMES * BLOCK);
  const frames: Uint8Array[] = [];
  for (let n = 0; n < FRAMES; n++) {
    const s = samplesOf(n, falseSyncFrame);
    samples.set(s, n * BLOCK);
    frames.push(frameBytes(n, s));
  }
  // STREAMINFO (RFC 9639, 8.2): block sizes, frame sizes unknown, rate/channels/bits/total, MD5 of the samples little-endian.
  const info = new Uint8Array(34);
  const v = new DataView(info.buffer);
  v.setUint16(0, BLOCK);
  v.setUint16(2, BLOCK);
  const packed = (BigInt(RATE) << 44n) | (0n << 41n) | (15n << 36n) | BigInt(samples.length);
  v.setBigUint64(10, packed);
  const le = new Uint8Array(samples.length * 2);
  for (let i = 0; i < samples.length; i++) new DataView(le.buffer).setInt16(2 * i, samples[i], true);
  info.set(createHash("md5").update(le).digest(), 18);
  const head = new Uint8Array([...Buffer.from("fLaC"), 0x80, 0, 0, 34, ...info]);
  const offsets: number[] = [];
  let at = head.length;
  for (const f of frames) {
    offsets.push(at);
    at += f.length;
  }
  const bytes = new Uint8Array(at);
  bytes.set(head, 0);
  frames.forEach((f, n) => bytes.set(f, offsets[n]));
  return { bytes, offsets, samples };
}

interface Decoded {
  samples: Int16Array;
  findings: Finding[];
  trailingBytes: number;
}

/** Through the reader's decoder, fed in odd-sized pieces so boundaries fall anywhere in the framer's buffer. */
async function decode(bytes: Uint8Array, piece = 333): Promise<Decoded> {
  const layout = await readFlacLayout(byteSourceFromBytes(bytes));
  const out = new Int16Array(layout.totalFrames);
  const decoder = await createFlacStreamDecoder(layout, 1000, (block) => {
    const x = block.channels[0];
    for (let i = 0; i < block.frames; i++) out[block.startFrame + i] = Math.round(x[i] * 32768);
  });
  for (let at = 0; at < bytes.length; at += piece) await decoder.push(bytes.subarray(at, Math.min(bytes.length, at + piece)), at);
  await decoder.finish();
  return { samples: out, findings: decoder.findings, trailingBytes: decoder.trailingBytes };
}

const frameOf = (s: Int16Array, n: number): Int16Array => s.subarray(n * BLOCK, (n + 1) * BLOCK);
const decodeErrors = (d: Decoded): Finding[] => d.findings.filter((f) => f.code === "decode-error");
const codes = (d: Decoded): string[] => d.findings.map((f) => f.code);

let dir: string;
const stream = buildStream(FALSE_SYNC_FRAME);
const plain = buildStream(null);
/** The false sync in the last frame: only the end of the stream can show where that frame ends. */
const lastFalse = buildStream(FRAMES - 1);
beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-flacframing-"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe.runIf(hasFlac)("FLAC frame boundaries", () => {
  it("the built stream is valid FLAC with a false sync in frame 9's audio: Debian's flac decodes exactly the planted samples", () => {
    const file = path.join(dir, "falsesync.flac");
    writeFileSync(file, stream.bytes);
    expect(spawnSync("flac", ["-s", "-t", file]).status).toBe(0);
    const last = path.join(dir, "lastfalse.flac");
    writeFileSync(last, lastFalse.bytes);
    expect(spawnSync("flac", ["-s", "-t", last]).status).toBe(0);
    const raw = path.join(dir, "falsesync.raw");
    execFileSync("flac", ["-s", "-f", "-d", "--force-raw-format", "--endian=little", "--sign=signed", file, "-o", raw]);
    const decoded = new Int16Array(new Uint8Array(readFileSync(raw)).buffer);
    expect(decoded).toEqual(stream.samples);
    // The planted header really is a candidate boundary: sync code, the next frame's number, a valid CRC-8.
    const at = stream.offsets[FALSE_SYNC_FRAME] + 7 + 2 * FALSE_SYNC_SAMPLE;
    expect(Array.from(stream.bytes.subarray(at, at + 6))).toEqual(Array.from(frameHeader(FALSE_SYNC_FRAME + 1)));
  });

  it("a false sync code in a frame's data does not split the frame: no finding, every sample, the MD5 agrees", async () => {
    for (const piece of [333, 1 << 20]) {
      const d = await decode(stream.bytes, piece);
      expect(d.findings).toEqual([]);
      expect(d.samples).toEqual(stream.samples);
      expect(d.trailingBytes).toBe(0);
    }
  });

  it("a false sync code in the last frame's data: the frame runs to the end of the stream, whole", async () => {
    const d = await decode(lastFalse.bytes);
    expect(d.findings).toEqual([]);
    expect(d.samples).toEqual(lastFalse.samples);
    expect(d.trailingBytes).toBe(0);
  });

  it("a flipped byte after a false sync code in the last frame: that frame is lost at its time, nothing else", async () => {
    const n = FRAMES - 1;
    const bytes = lastFalse.bytes.slice();
    bytes[lastFalse.offsets[n] + 7 + 2 * (FALSE_SYNC_SAMPLE + 50)] ^= 0x04;
    const d = await decode(bytes);
    const errors = decodeErrors(d);
    expect(errors).toHaveLength(1);
    expect(errors[0].startSeconds).toBeCloseTo((n * BLOCK) / RATE, 9);
    expect(errors[0].endSeconds).toBeCloseTo(((n + 1) * BLOCK) / RATE, 9);
    expect(frameOf(d.samples, n).every((x) => x === 0)).toBe(true);
    for (let k = 0; k < n; k++) expect(frameOf(d.samples, k)).toEqual(frameOf(lastFalse.samples, k));
    expect(codes(d)).not.toContain("truncated");
  });

  it.each([
    ["with", stream],
    ["without", plain],
  ])("a flipped byte in a frame (stream %s a false sync): one decode-error with that frame's time, its length as silence, the rest unchanged", async (_, stream) => {
    const n = 4;
    const bytes = stream.bytes.slice();
    bytes[stream.offsets[n] + 300] ^= 0x10;
    const d = await decode(bytes);
    const errors = decodeErrors(d);
    expect(errors).toHaveLength(1);
    expect(errors[0].startSeconds).toBeCloseTo((n * BLOCK) / RATE, 9);
    expect(errors[0].endSeconds).toBeCloseTo(((n + 1) * BLOCK) / RATE, 9);
    expect(errors[0].message).toMatch(/CRC-16/);
    expect(frameOf(d.samples, n).every((x) => x === 0)).toBe(true);
    for (let k = 0; k < FRAMES; k++) if (k !== n) expect(frameOf(d.samples, k)).toEqual(frameOf(stream.samples, k));
    expect(codes(d)).toContain("flac-md5-mismatch");
  });

  it("a flipped byte after the false sync in the same frame: that frame is lost at its time, the next one is whole", async () => {
    const n = FALSE_SYNC_FRAME;
    const bytes = stream.bytes.slice();
    bytes[stream.offsets[n] + 7 + 2 * (FALSE_SYNC_SAMPLE + 40)] ^= 0x01;
    for (const piece of [333, 1 << 20]) {
      const d = await decode(bytes, piece);
      const errors = decodeErrors(d);
      expect(errors).toHaveLength(1);
      expect(errors[0].startSeconds).toBeCloseTo((n * BLOCK) / RATE, 9);
      expect(errors[0].endSeconds).toBeCloseTo(((n + 1) * BLOCK) / RATE, 9);
      expect(frameOf(d.samples, n).every((x) => x === 0)).toBe(true);
      for (let k = 0; k < FRAMES; k++) if (k !== n) expect(frameOf(d.samples, k)).toEqual(frameOf(stream.samples, k));
      expect(codes(d)).toContain("flac-md5-mismatch");
    }
  });

  it("a flipped byte before the false sync in the same frame: the same, however the false header looks", async () => {
    const n = FALSE_SYNC_FRAME;
    const bytes = stream.bytes.slice();
    bytes[stream.offsets[n] + 7 + 2 * 10] ^= 0x01;
    const d = await decode(bytes);
    const errors = decodeErrors(d);
    expect(errors).toHaveLength(1);
    expect(errors[0].startSeconds).toBeCloseTo((n * BLOCK) / RATE, 9);
    for (let k = 0; k < FRAMES; k++) if (k !== n) expect(frameOf(d.samples, k)).toEqual(frameOf(stream.samples, k));
  });

  it.each([
    ["with", stream],
    ["without", plain],
  ])("a damaged header (CRC-8 fails; stream %s a false sync): the frame is reported lost with its time; the frame before it stays whole", async (_, stream) => {
    const n = 14;
    const bytes = stream.bytes.slice();
    bytes[stream.offsets[n] + 4] ^= 0x40; // the frame number
    const d = await decode(bytes);
    const errors = decodeErrors(d);
    expect(errors).toHaveLength(1);
    expect(errors[0].startSeconds).toBeCloseTo((n * BLOCK) / RATE, 9);
    expect(errors[0].endSeconds).toBeCloseTo(((n + 1) * BLOCK) / RATE, 9);
    expect(errors[0].message).toMatch(/lost sync/);
    for (let k = 0; k < FRAMES; k++) if (k !== n) expect(frameOf(d.samples, k)).toEqual(frameOf(stream.samples, k));
  });

  it("bytes between two frames: the frame before them fails its CRC-16 and is lost at its time; every other frame keeps its samples and time", async () => {
    const n = 6;
    const junk = new Uint8Array(40).fill(0x55);
    const at = stream.offsets[n + 1];
    const bytes = new Uint8Array([...stream.bytes.subarray(0, at), ...junk, ...stream.bytes.subarray(at)]);
    const d = await decode(bytes);
    const errors = decodeErrors(d);
    expect(errors).toHaveLength(1);
    expect(errors[0].startSeconds).toBeCloseTo((n * BLOCK) / RATE, 9);
    expect(errors[0].endSeconds).toBeCloseTo(((n + 1) * BLOCK) / RATE, 9);
    expect(frameOf(d.samples, n).every((x) => x === 0)).toBe(true);
    for (let k = 0; k < FRAMES; k++) if (k !== n) expect(frameOf(d.samples, k)).toEqual(frameOf(stream.samples, k));
    expect(codes(d)).toContain("flac-md5-mismatch");
  });

  it("bytes between frames that start with a false header: they pass for the next frame, which is lost at its time; no frame shifts", async () => {
    const n = 16;
    const junk = new Uint8Array([...frameHeader(n + 1), 0x02, ...new Uint8Array(30).fill(0x33)]);
    const at = stream.offsets[n + 1];
    const bytes = new Uint8Array([...stream.bytes.subarray(0, at), ...junk, ...stream.bytes.subarray(at)]);
    const d = await decode(bytes);
    const errors = decodeErrors(d);
    expect(errors.length).toBeGreaterThanOrEqual(1);
    // The frame before the junk ends where its CRC-16 comes to 0, at the false header.
    expect(errors).toHaveLength(1);
    expect(errors[0].startSeconds).toBeCloseTo(((n + 1) * BLOCK) / RATE, 9);
    expect(errors[0].endSeconds).toBeCloseTo(((n + 2) * BLOCK) / RATE, 9);
    expect(frameOf(d.samples, n + 1).every((x) => x === 0)).toBe(true);
    for (let k = 0; k < FRAMES; k++) if (k !== n + 1) expect(frameOf(d.samples, k)).toEqual(frameOf(stream.samples, k));
  });

  it.each([
    ["with", stream],
    ["without", plain],
  ])("bytes after the last frame (stream %s a false sync) are trailing data, counted exactly", async (_, stream) => {
    const bytes = new Uint8Array([...stream.bytes, ...new Uint8Array(123).fill(0x21)]);
    const d = await decode(bytes);
    expect(d.trailingBytes).toBe(123);
    expect(d.samples).toEqual(stream.samples);
    expect(decodeErrors(d)).toEqual([]);
  });
});

/** Stereo PCM WAV (16 or 24 bits, little-endian), and its samples as integers per channel. */
function stereoWav(bits: 16 | 24, frames: number): { wav: Uint8Array; left: Int32Array; right: Int32Array } {
  const width = bits / 8;
  const left = new Int32Array(frames);
  const right = new Int32Array(frames);
  const full = 2 ** (bits - 1);
  let seed = 12345;
  for (let i = 0; i < frames; i++) {
    seed = (seed * 1103515245 + 12345) >>> 0;
    left[i] = Math.round(0.4 * full * Math.sin((i * 2 * Math.PI * 997) / RATE)) + ((seed >>> 8) % 2001) - 1000;
    right[i] = Math.max(-full, Math.min(full - 1, Math.round(-0.7 * full * Math.sin((i * 2 * Math.PI * 50) / RATE))));
  }
  const data = new Uint8Array(frames * 2 * width);
  const v = new DataView(data.buffer);
  for (let i = 0, j = 0; i < frames; i++) {
    for (const x of [left[i], right[i]]) {
      if (width === 2) v.setInt16(j, x, true);
      else {
        v.setUint8(j, x & 0xff);
        v.setInt16(j + 1, x >> 8, true);
      }
      j += width;
    }
  }
  const head = new Uint8Array(44);
  const h = new DataView(head.buffer);
  head.set(Buffer.from("RIFF"), 0);
  h.setUint32(4, 36 + data.length, true);
  head.set(Buffer.from("WAVEfmt "), 8);
  h.setUint32(16, 16, true);
  h.setUint16(20, 1, true);
  h.setUint16(22, 2, true);
  h.setUint32(24, RATE, true);
  h.setUint32(28, RATE * 2 * width, true);
  h.setUint16(32, 2 * width, true);
  h.setUint16(34, bits, true);
  head.set(Buffer.from("data"), 36);
  h.setUint32(40, data.length, true);
  return { wav: new Uint8Array([...head, ...data]), left, right };
}

describe.runIf(hasFlac)("FLAC stereo samples and MD5 input", () => {
  // flac computes STREAMINFO's MD5 from the WAV it encodes (Debian's flac): our MD5 of the decoded codes must equal it.
  it.each([
    [16, 4096],
    [24, 4096],
    [16, 1001],
    [24, 1001],
    [24, 4097],
  ] as const)("%i-bit stereo in %i-sample frames: every code back, the MD5 agrees", async (bits, block) => {
    const frames = RATE + 7;
    const { wav, left, right } = stereoWav(bits, frames);
    const wavFile = path.join(dir, `st${bits}-${block}.wav`);
    const flacFile = path.join(dir, `st${bits}-${block}.flac`);
    writeFileSync(wavFile, wav);
    execFileSync("flac", ["-s", "-f", "--lax", "-b", String(block), wavFile, "-o", flacFile]);
    const bytes = new Uint8Array(readFileSync(flacFile));
    const layout = await readFlacLayout(byteSourceFromBytes(bytes));
    const got = [new Int32Array(frames), new Int32Array(frames)];
    const decoder = await createFlacStreamDecoder(layout, 65536, (b) => {
      for (let c = 0; c < 2; c++) for (let i = 0; i < b.frames; i++) got[c][b.startFrame + i] = Math.round(b.channels[c][i] * 2 ** (bits - 1));
    });
    for (let at = 0; at < bytes.length; at += 100_000) await decoder.push(bytes.subarray(at, Math.min(bytes.length, at + 100_000)), at);
    await decoder.finish();
    expect(decoder.findings).toEqual([]);
    expect(layout.streamInfo.md5).not.toBeNull();
    expect(got[0]).toEqual(left);
    expect(got[1]).toEqual(right);
  });
});
