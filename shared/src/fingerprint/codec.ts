/**
 * Text form of a fingerprint for the JSON report and the API: base64 (RFC 4648 alphabet, padded)
 * of a little-endian byte layout. Pure code (no Buffer, no btoa), so it runs in Node and browser.
 *
 * Layout: "TF" · layout byte (1) · flags (bit 0: times on the analysis grid) · version u32 ·
 * durationSeconds f64 · count u32 · count × hash u32 · times. On-grid times (what the
 * fingerprinter makes) are stored as LEB128 deltas of frame numbers, ~1 byte each instead of 4;
 * other times as f32. Decoding reproduces the Float32 times exactly either way.
 */
import { FINGERPRINT_GRID, FINGERPRINT_VERSION, frameTimeSeconds } from "./fingerprinter.ts";
import { assertFingerprintShape } from "./offsetHistogram.ts";
import type { Fingerprint } from "./types.ts";

const MAGIC_0 = 0x54; // "T"
const MAGIC_1 = 0x46; // "F"
const LAYOUT = 1;
const FLAG_GRID_TIMES = 1;
const HEADER_BYTES = 20;

const ALPHABET = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
const DECODE_TABLE = new Int16Array(128).fill(-1);
for (let i = 0; i < ALPHABET.length; i++) DECODE_TABLE[ALPHABET.charCodeAt(i)] = i;

export class FingerprintDecodeError extends Error {
  constructor(message: string) {
    super(`fingerprint: ${message}`);
    this.name = "FingerprintDecodeError";
  }
}

function toBase64(bytes: Uint8Array): string {
  const parts: string[] = [];
  // Chunks keep String.fromCharCode's argument list small.
  const chunk = new Uint16Array(4 * 8192);
  for (let start = 0; start < bytes.length; start += 3 * 8192) {
    const end = Math.min(bytes.length, start + 3 * 8192);
    let n = 0;
    for (let i = start; i < end; i += 3) {
      const b0 = bytes[i];
      const b1 = i + 1 < end ? bytes[i + 1] : 0;
      const b2 = i + 2 < end ? bytes[i + 2] : 0;
      chunk[n++] = ALPHABET.charCodeAt(b0 >> 2);
      chunk[n++] = ALPHABET.charCodeAt(((b0 & 3) << 4) | (b1 >> 4));
      chunk[n++] = i + 1 < end ? ALPHABET.charCodeAt(((b1 & 15) << 2) | (b2 >> 6)) : 0x3d;
      chunk[n++] = i + 2 < end ? ALPHABET.charCodeAt(b2 & 63) : 0x3d;
    }
    parts.push(String.fromCharCode(...chunk.subarray(0, n)));
  }
  return parts.join("");
}

function fromBase64(text: string): Uint8Array {
  if (text.length % 4 !== 0) throw new FingerprintDecodeError(`base64 length must be a multiple of 4, got ${text.length}`);
  let pad = 0;
  if (text.endsWith("==")) pad = 2;
  else if (text.endsWith("=")) pad = 1;
  const out = new Uint8Array((text.length / 4) * 3 - pad);
  let o = 0;
  for (let i = 0; i < text.length; i += 4) {
    let word = 0;
    for (let j = 0; j < 4; j++) {
      const at = i + j;
      const code = text.charCodeAt(at);
      const isPad = code === 0x3d && at >= text.length - pad;
      const v = isPad ? 0 : code < 128 ? DECODE_TABLE[code] : -1;
      if (v < 0) throw new FingerprintDecodeError(`not base64: character ${JSON.stringify(text[at])} at ${at}`);
      word = (word << 6) | v;
    }
    if (o < out.length) out[o++] = (word >> 16) & 255;
    if (o < out.length) out[o++] = (word >> 8) & 255;
    if (o < out.length) out[o++] = word & 255;
  }
  return out;
}

/** Frame numbers of `times` if every one is exactly a grid time of the current version, else null. */
function gridFrames(fp: Fingerprint): Uint32Array | null {
  if (fp.version !== FINGERPRINT_VERSION) return null;
  const { hopSize, fftSize, analysisRateHz } = FINGERPRINT_GRID;
  const frames = new Uint32Array(fp.times.length);
  let previous = 0;
  for (let i = 0; i < fp.times.length; i++) {
    const k = Math.round((fp.times[i] * analysisRateHz - fftSize / 2) / hopSize);
    if (!(k >= previous) || k > 0xffffffff || Math.fround(frameTimeSeconds(k)) !== fp.times[i]) return null;
    frames[i] = k;
    previous = k;
  }
  return frames;
}

export function encodeFingerprint(fp: Fingerprint): string {
  assertFingerprintShape(fp, "encodeFingerprint");
  if (!(Number.isFinite(fp.durationSeconds) && fp.durationSeconds >= 0)) {
    throw new RangeError(`encodeFingerprint: durationSeconds must be finite and ≥ 0, got ${fp.durationSeconds}`);
  }
  const count = fp.hashes.length;
  const frames = gridFrames(fp);
  const timeBytes = frames ? 5 * count : 4 * count; // LEB128 of a u32 delta takes ≤ 5 bytes
  const bytes = new Uint8Array(HEADER_BYTES + 4 * count + timeBytes);
  const view = new DataView(bytes.buffer);
  bytes[0] = MAGIC_0;
  bytes[1] = MAGIC_1;
  bytes[2] = LAYOUT;
  bytes[3] = frames ? FLAG_GRID_TIMES : 0;
  view.setUint32(4, fp.version, true);
  view.setFloat64(8, fp.durationSeconds, true);
  view.setUint32(16, count, true);
  let at = HEADER_BYTES;
  for (let i = 0; i < count; i++, at += 4) view.setUint32(at, fp.hashes[i], true);
  if (frames) {
    let previous = 0;
    for (let i = 0; i < count; i++) {
      let delta = frames[i] - previous;
      previous = frames[i];
      while (delta >= 0x80) {
        bytes[at++] = (delta & 0x7f) | 0x80;
        delta >>>= 7;
      }
      bytes[at++] = delta;
    }
  } else {
    for (let i = 0; i < count; i++, at += 4) view.setFloat32(at, fp.times[i], true);
  }
  return toBase64(bytes.subarray(0, at));
}

/**
 * The version in an encoded fingerprint's header, without decoding the rest: a reader can skip a
 * fingerprint of another version (which it could not compare) instead of failing on it.
 */
export function fingerprintVersionOf(text: string): number {
  if (typeof text !== "string") throw new FingerprintDecodeError(`expected a base64 string, got ${typeof text}`);
  // 28 base64 characters are 21 bytes: the whole header.
  const head = fromBase64(text.slice(0, 28));
  if (head.length < HEADER_BYTES) throw new FingerprintDecodeError(`need at least ${HEADER_BYTES} bytes, got ${head.length}`);
  if (head[0] !== MAGIC_0 || head[1] !== MAGIC_1) throw new FingerprintDecodeError("not a Tidemark fingerprint (bad magic)");
  return new DataView(head.buffer, head.byteOffset, head.byteLength).getUint32(4, true);
}

export function decodeFingerprint(text: string): Fingerprint {
  if (typeof text !== "string") throw new FingerprintDecodeError(`expected a base64 string, got ${typeof text}`);
  const bytes = fromBase64(text);
  if (bytes.length < HEADER_BYTES) throw new FingerprintDecodeError(`need at least ${HEADER_BYTES} bytes, got ${bytes.length}`);
  if (bytes[0] !== MAGIC_0 || bytes[1] !== MAGIC_1) throw new FingerprintDecodeError("not a Tidemark fingerprint (bad magic)");
  if (bytes[2] !== LAYOUT) throw new FingerprintDecodeError(`unsupported layout ${bytes[2]} (this build reads ${LAYOUT})`);
  const flags = bytes[3];
  if ((flags & ~FLAG_GRID_TIMES) !== 0) throw new FingerprintDecodeError(`unknown flags 0x${flags.toString(16)}`);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const version = view.getUint32(4, true);
  const durationSeconds = view.getFloat64(8, true);
  const count = view.getUint32(16, true);
  if (version < 1) throw new FingerprintDecodeError(`bad version ${version}`);
  if (!(Number.isFinite(durationSeconds) && durationSeconds >= 0)) {
    throw new FingerprintDecodeError(`durationSeconds must be finite and ≥ 0, got ${durationSeconds}`);
  }
  const isGrid = (flags & FLAG_GRID_TIMES) !== 0;
  if (isGrid && version !== FINGERPRINT_VERSION) {
    throw new FingerprintDecodeError(`grid times of version ${version} cannot be read by version ${FINGERPRINT_VERSION}`);
  }
  // Each entry is a 4-byte hash plus a 4-byte float time, or a LEB128 time of at least one byte.
  const minBytes = HEADER_BYTES + count * (isGrid ? 5 : 8);
  if (isGrid ? bytes.length < minBytes : bytes.length !== minBytes) {
    throw new FingerprintDecodeError(`header says ${count} hashes but ${bytes.length - HEADER_BYTES} bytes of data follow`);
  }
  const hashes = new Uint32Array(count);
  let at = HEADER_BYTES;
  for (let i = 0; i < count; i++, at += 4) hashes[i] = view.getUint32(at, true);
  const times = new Float32Array(count);
  if (isGrid) {
    let frame = 0;
    for (let i = 0; i < count; i++) {
      let delta = 0;
      let shift = 0;
      for (;;) {
        if (at >= bytes.length) throw new FingerprintDecodeError(`time data ends inside entry ${i} of ${count}`);
        const b = bytes[at++];
        if (shift > 28) throw new FingerprintDecodeError(`time delta of entry ${i} is too long`);
        delta += (b & 0x7f) * 2 ** shift;
        shift += 7;
        if (b < 0x80) break;
      }
      frame += delta;
      if (frame > 0xffffffff) throw new FingerprintDecodeError(`time of entry ${i} is out of range`);
      times[i] = frameTimeSeconds(frame);
    }
  } else {
    for (let i = 0; i < count; i++, at += 4) times[i] = view.getFloat32(at, true);
  }
  if (at !== bytes.length) throw new FingerprintDecodeError(`${bytes.length - at} unexpected bytes after the data`);
  return { version, hashes, times, durationSeconds };
}
