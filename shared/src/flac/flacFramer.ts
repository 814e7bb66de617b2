/**
 * Splits a FLAC stream's frame bytes, fed in order in buffers of any size, into frames (RFC 9639, section 9),
 * checking each one: a frame runs from a sync code whose header passes its CRC-8 to the next such header that
 * continues the sample count, and is whole when its CRC-16 holds. A frame whose CRC-16 fails, or a stretch of
 * bytes with no valid header, comes out as a gap of known length (from the sample numbers), so the caller can
 * fill it with silence, report it with its time, and keep measuring. Memory stays bounded: a frame that
 * never ends within `maxFrameBytes` is given up and the framer searches for the next header.
 */
import type { FlacStreamInfo } from "./flacLayout.ts";

export interface FlacFrameHeader {
  /** First sample of the frame (frame number × nominal block size in fixed-blocksize streams). */
  sampleNumber: number;
  blockSize: number;
  /** Bytes of the header including its CRC-8. */
  headerBytes: number;
}

export interface FlacFramerEvents {
  /** A whole frame (valid CRC-16); `bytes` is only valid during the call. */
  frame(bytes: Uint8Array, header: FlacFrameHeader, fileOffset: number): void;
  /** `frames` samples from `startSample` were lost (bad CRC-16, lost sync); `why` says which. */
  gap(startSample: number, frames: number, fileOffset: number, why: string): void;
}

const CRC8 = new Uint8Array(256);
const CRC16 = new Uint16Array(256);
for (let i = 0; i < 256; i++) {
  // CRC-8 polynomial x^8+x^2+x+1 (0x07), CRC-16 x^16+x^15+x^2+1 (0x8005), both MSB first, initial 0 (RFC 9639, 9.1.8, 9.3).
  let c8 = i;
  let c16 = i << 8;
  for (let k = 0; k < 8; k++) {
    c8 = c8 & 0x80 ? ((c8 << 1) ^ 0x07) & 0xff : (c8 << 1) & 0xff;
    c16 = c16 & 0x8000 ? ((c16 << 1) ^ 0x8005) & 0xffff : (c16 << 1) & 0xffff;
  }
  CRC8[i] = c8;
  CRC16[i] = c16;
}

export function crc8(b: Uint8Array, start: number, end: number): number {
  let crc = 0;
  for (let i = start; i < end; i++) crc = CRC8[crc ^ b[i]];
  return crc;
}

const SAMPLE_RATES = [0, 88200, 176400, 192000, 8000, 16000, 22050, 24000, 32000, 44100, 48000, 96000];
const SAMPLE_SIZES = [0, 8, 12, -1, 16, 20, 24, 32];
/** Longest header: 4 fixed bytes, 7-byte coded number, 2 bytes block size, 2 bytes rate, CRC-8. */
export const MAX_HEADER_BYTES = 16;

/**
 * Parses a frame header at `at` (RFC 9639, 9.1), or null when it is not one that fits this stream (bad CRC-8,
 * reserved values, a rate, channel count or bit depth that disagrees with STREAMINFO). Needs MAX_HEADER_BYTES
 * bytes or the end of the data.
 */
export function parseFrameHeader(b: Uint8Array, at: number, end: number, info: FlacStreamInfo): FlacFrameHeader | null {
  if (at + 6 > end || b[at] !== 0xff || (b[at + 1] & 0xfe) !== 0xf8) return null;
  const isVariable = (b[at + 1] & 1) === 1;
  const blockCode = b[at + 2] >> 4;
  const rateCode = b[at + 2] & 0x0f;
  const channelCode = b[at + 3] >> 4;
  const sizeCode = (b[at + 3] >> 1) & 7;
  if (blockCode === 0 || rateCode === 15 || channelCode > 10 || SAMPLE_SIZES[sizeCode] < 0 || (b[at + 3] & 1) !== 0) return null;
  const channels = channelCode < 8 ? channelCode + 1 : 2;
  if (channels !== info.channels) return null;
  if (sizeCode !== 0 && SAMPLE_SIZES[sizeCode] !== info.bitsPerSample) return null;
  // The coded number: UTF-8-like, 1 to 7 bytes (9.1.5).
  let p = at + 4;
  const first = b[p++];
  let extra: number;
  let value: number;
  if (first < 0x80) {
    extra = 0;
    value = first;
  } else if (first >= 0xc0 && first < 0xe0) {
    extra = 1;
    value = first & 0x1f;
  } else if (first >= 0xe0 && first < 0xf0) {
    extra = 2;
    value = first & 0x0f;
  } else if (first >= 0xf0 && first < 0xf8) {
    extra = 3;
    value = first & 0x07;
  } else if (first >= 0xf8 && first < 0xfc) {
    extra = 4;
    value = first & 0x03;
  } else if (first >= 0xfc && first < 0xfe) {
    extra = 5;
    value = first & 0x01;
  } else if (first === 0xfe) {
    extra = 6;
    value = 0;
  } else return null;
  if (p + extra > end) return null;
  for (let k = 0; k < extra; k++) {
    const c = b[p++];
    if ((c & 0xc0) !== 0x80) return null;
    value = value * 64 + (c & 0x3f);
  }
  let blockSize: number;
  if (blockCode === 1) blockSize = 192;
  else if (blockCode <= 5) blockSize = 576 << (blockCode - 2);
  else if (blockCode === 6) {
    if (p + 1 > end) return null;
    blockSize = b[p++] + 1;
  } else if (blockCode === 7) {
    if (p + 2 > end) return null;
    blockSize = ((b[p] << 8) | b[p + 1]) + 1;
    p += 2;
  } else blockSize = 256 << (blockCode - 8);
  let rate = SAMPLE_RATES[rateCode] ?? 0;
  if (rateCode === 12) {
    if (p + 1 > end) return null;
    rate = b[p++] * 1000;
  } else if (rateCode === 13 || rateCode === 14) {
    if (p + 2 > end) return null;
    rate = ((b[p] << 8) | b[p + 1]) * (rateCode === 14 ? 10 : 1);
    p += 2;
  }
  if (rateCode !== 0 && rate !== info.sampleRateHz) return null;
  if (p + 1 > end || crc8(b, at, p) !== b[p]) return null;
  if (blockSize > info.maxBlockSize) return null;
  const sampleNumber = isVariable ? value : value * info.maxBlockSize;
  return { sampleNumber, blockSize, headerBytes: p + 1 - at };
}

export interface FlacFramer {
  push(bytes: Uint8Array): void;
  /** Ends the stream; returns the bytes after the last whole frame that belong to no frame. */
  finish(): { trailingBytes: number };
  /** Samples accounted for so far (decoded frames and gaps). */
  readonly nextSample: number;
}

/**
 * `firstOffset` is the file offset of the first byte pushed; `totalSamples` (0 = unknown) bounds the gaps.
 */
export function createFlacFramer(info: FlacStreamInfo, firstOffset: number, events: FlacFramerEvents): FlacFramer {
  // A frame can hardly exceed its raw PCM size plus headers (RFC 9639 10: the verbatim fallback).
  const rawFrameBytes = info.maxBlockSize * info.channels * Math.ceil((info.bitsPerSample + 1) / 8) + 1024;
  const maxFrameBytes = Math.max(rawFrameBytes, info.maxFrameSize) + 64;
  let buf = new Uint8Array(Math.max(1 << 20, 2 * maxFrameBytes));
  let len = 0;
  /** File offset of buf[0]. */
  let base = firstOffset;
  /** Current frame: start index in buf and header, or null while searching for sync. */
  let cur: FlacFrameHeader | null = null;
  let curStart = 0;
  let scan = 0;
  let crc = 0;
  /** Index just past the last position where the running CRC-16 was 0 (a possible frame end), or -1. */
  let lastZero = -1;
  let nextSample = 0;

  const append = (bytes: Uint8Array): void => {
    const keepFrom = cur ? curStart : Math.max(0, scan - 1);
    if (len + bytes.length > buf.length) {
      // Drop what is done; grow only when one frame plus the new bytes need it.
      const kept = len - keepFrom;
      const target = kept + bytes.length > buf.length ? new Uint8Array(Math.max(buf.length * 2, kept + bytes.length)) : buf;
      target.set(buf.subarray(keepFrom, len), 0);
      buf = target;
      len = kept;
      base += keepFrom;
      curStart -= keepFrom;
      scan -= keepFrom;
      if (lastZero >= 0) lastZero -= keepFrom;
    }
    buf.set(bytes, len);
    len += bytes.length;
  };

  const gapTo = (sample: number, offset: number, why: string): void => {
    let to = sample;
    if (info.totalSamples > 0) to = Math.min(to, info.totalSamples);
    if (to > nextSample) {
      events.gap(nextSample, to - nextSample, offset, why);
      nextSample = to;
    }
  };

  const begin = (header: FlacFrameHeader, at: number): void => {
    cur = header;
    curStart = at;
    crc = 0;
    scan = at;
    lastZero = -1;
  };

  /** Ends the current frame at `end`, whole or damaged. */
  const close = (end: number, isWhole: boolean): void => {
    const h = cur as FlacFrameHeader;
    if (h.sampleNumber > nextSample) gapTo(h.sampleNumber, base + curStart, "lost sync: frames missing before this point");
    if (isWhole) {
      events.frame(buf.subarray(curStart, end), h, base + curStart);
      nextSample = h.sampleNumber + h.blockSize;
    } else gapTo(h.sampleNumber + h.blockSize, base + curStart, "frame CRC-16 mismatch");
    cur = null;
  };

  const startsWithSync = (at: number): boolean => at > curStart && at + 1 < len && buf[at] === 0xff && (buf[at + 1] & 0xfe) === 0xf8;

  const process = (isFinal: boolean): void => {
    for (;;) {
      if (!cur) {
        // Searching: the next sync code whose header fits and does not go back in time.
        let found = false;
        while (scan + 1 < len) {
          if (buf[scan] === 0xff && (buf[scan + 1] & 0xfe) === 0xf8) {
            if (scan + MAX_HEADER_BYTES > len && !isFinal) return;
            const h = parseFrameHeader(buf, scan, len, info);
            if (h && h.sampleNumber >= nextSample) {
              begin(h, scan);
              found = true;
              break;
            }
          }
          scan++;
        }
        if (!found) return;
      }
      const h = cur as unknown as FlacFrameHeader;
      const expected = h.sampleNumber + h.blockSize;
      // Resume the CRC-16 walk; look for the next header at each sync code past this header.
      const minEnd = curStart + h.headerBytes + 2;
      let closed = false;
      while (scan < len) {
        if (scan >= minEnd && buf[scan] === 0xff && scan + 1 < len && (buf[scan + 1] & 0xfe) === 0xf8) {
          if (scan + MAX_HEADER_BYTES > len && !isFinal) return;
          const next = parseFrameHeader(buf, scan, len, info);
          if (next && next.sampleNumber >= expected && (crc === 0 || next.sampleNumber <= expected + 16 * info.maxBlockSize)) {
            const at = scan;
            if (crc !== 0 && next.sampleNumber > expected && startsWithSync(lastZero)) {
              // This frame was whole; the bytes after it are a frame whose header was damaged.
              close(lastZero, true);
            } else close(at, crc === 0);
            begin(next, at);
            closed = true;
            break;
          }
        } else if (scan >= minEnd && buf[scan] === 0xff && scan + 1 >= len && !isFinal) return;
        crc = ((crc << 8) & 0xffff) ^ CRC16[(crc >> 8) ^ buf[scan]];
        scan++;
        if (crc === 0 && scan >= minEnd) lastZero = scan;
        if (scan - curStart > maxFrameBytes) {
          // No next header within any real frame's length: give this one up and search again.
          close(scan, false);
          closed = true;
          break;
        }
      }
      if (!closed) return;
    }
  };

  return {
    push(bytes) {
      append(bytes);
      process(false);
    },
    finish() {
      process(true);
      let trailingBytes = 0;
      if (cur) {
        if (lastZero >= 0) {
          trailingBytes = len - lastZero;
          close(lastZero, true);
        } else close(len, false);
      }
      // With no frame open, the bytes since the last one were already reported as a gap.
      // A stream that ends early is not padded here: the caller reports the truncation.
      return { trailingBytes };
    },
    get nextSample() {
      return nextSample;
    },
  };
}
