/**
 * Splits a FLAC stream's frame bytes, fed in order in buffers of any size, into frames (RFC 9639, section 9),
 * checking each one: a frame runs from a sync code whose header passes its CRC-8 to the next such header that
 * continues the sample count, and is whole when its CRC-16 holds. A frame whose CRC-16 fails, or a stretch of
 * bytes with no valid header, comes out as a gap of known length (from the sample numbers), so the caller can
 * fill it with silence, report it with its time, and keep measuring. Memory stays bounded: a frame that
 * never ends within `maxFrameBytes` is given up and the framer searches for the next header.
 *
 * A frame whose CRC-16 fails at a header continuing the sample count exactly may hold a false sync code in its
 * data (a sync code, a header passing CRC-8, the next sample number), so the framer reads on to where the
 * CRC-16 comes to 0 at a header, and falls back to the first one once the next frame's header shows the frame
 * was damaged after all. Only frames whose CRC-16 held reach the caller: libFLAC's WebAssembly build, given
 * damaged frames unchecked, was seen to fault (out-of-bounds memory access) on a file with many flipped bytes.
 *
 * The last frame has no next header: it ends at the first CRC-16 zero libFLAC decodes whole (offered as
 * `tentative`), and what follows is trailing data only when STREAMINFO's total is complete; otherwise it is
 * the last frame with a damaged header (lost at its time) or a frame cut off by the end of the file (left to
 * the caller's truncated finding). tests/cli/flacStreamEnd.test.ts checks this on files made by Debian's flac.
 */
import type { FlacStreamInfo } from "./flacLayout.ts";
import { createFlacFrameScan, type FlacFrameScan } from "./flacFrameScan.ts";

export interface FlacFrameHeader {
  /** First sample of the frame (frame number × nominal block size in fixed-blocksize streams). */
  sampleNumber: number;
  blockSize: number;
  /** Bytes of the header including its CRC-8. */
  headerBytes: number;
  /** The header leaves the sample rate or bit depth to STREAMINFO (code 0, RFC 9639, 9.1.2 and 9.1.4). */
  defersToStreamInfo: boolean;
}

export interface FlacFramerEvents {
  /**
   * A whole frame (valid CRC-16); `bytes` is only valid during the call. With `tentative` (the last frame, whose
   * end only its CRC-16 shows), a frame that does not decode whole must be turned down: return false and
   * report nothing, and the framer tries another end or reports it itself.
   */
  frame(bytes: Uint8Array, header: FlacFrameHeader, fileOffset: number, tentative?: boolean): boolean | void;
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
/** At the end of the stream, CRC-16 zeros offered to libFLAC as the last frame's end before it counts as damaged. */
const MAX_END_TRIES = 8;

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
  return { sampleNumber, blockSize, headerBytes: p + 1 - at, defersToStreamInfo: rateCode === 0 || sizeCode === 0 };
}

export interface FlacFramer {
  push(bytes: Uint8Array): void;
  /** Ends the stream; returns the bytes after the last whole frame that belong to no frame. */
  finish(): { trailingBytes: number };
  /** Samples accounted for so far (decoded frames and gaps). */
  readonly nextSample: number;
}

export interface FlacFramerOptions {
  /** Search and CRC-16 in WebAssembly (flacFrameScan.ts) where it runs (default); false: the JavaScript loops, same results. */
  wasm?: boolean;
}

/**
 * `firstOffset` is the file offset of the first byte pushed; STREAMINFO's total (0 = unknown) bounds the gaps.
 */
export function createFlacFramer(info: FlacStreamInfo, firstOffset: number, events: FlacFramerEvents, options: FlacFramerOptions = {}): FlacFramer {
  return new Framer(info, firstOffset, events, options.wasm !== false);
}

/**
 * Slice-by-16 table, flat: CRC16_16[k·256 + x] is the register after a byte x at the top is followed by k more
 * zero bytes (k = 0 is the byte-wise table), so sixteen input bytes cost sixteen lookups and one step (the CRC is
 * linear; the framer's per-byte cost is this loop). One flat array rather than one per k: V8 keeps a single
 * base and bounds check in registers. Measured on the project's machine (Node 20, CPU time, 152 MB in 4.3 kB
 * frames, 4 alternating runs): slice-by-4 in four arrays ≈ 150 ms, slice-by-8 flat ≈ 93 ms, this ≈ 88 ms.
 */
const CRC16_16 = new Uint16Array(16 * 256);
CRC16_16.set(CRC16, 0);
for (let k = 1; k < 16; k++) {
  for (let x = 0; x < 256; x++) {
    const r = CRC16_16[(k - 1) * 256 + x];
    CRC16_16[k * 256 + x] = ((r << 8) & 0xffff) ^ CRC16[r >> 8];
  }
}

/** CRC-16 of b[from, to) continuing from `crc`. */
export function crc16(b: Uint8Array, from: number, to: number, crc: number): number {
  const t = CRC16_16;
  let c = crc;
  let i = from;
  for (const end16 = to - 15; i < end16; i += 16) {
    c =
      t[3840 + ((c >> 8) ^ b[i])] ^ t[3584 + ((c & 0xff) ^ b[i + 1])] ^ t[3328 + b[i + 2]] ^ t[3072 + b[i + 3]] ^
      t[2816 + b[i + 4]] ^ t[2560 + b[i + 5]] ^ t[2304 + b[i + 6]] ^ t[2048 + b[i + 7]] ^
      t[1792 + b[i + 8]] ^ t[1536 + b[i + 9]] ^ t[1280 + b[i + 10]] ^ t[1024 + b[i + 11]] ^
      t[768 + b[i + 12]] ^ t[512 + b[i + 13]] ^ t[256 + b[i + 14]] ^ t[b[i + 15]];
  }
  for (; i < to; i++) c = ((c << 8) & 0xffff) ^ t[(c >> 8) ^ b[i]];
  return c;
}

/** The frame scan in JavaScript: where WebAssembly's SIMD is missing, or asked for (tests). */
function javaScriptFrameScan(capacity: number): FlacFrameScan {
  const bytes = new Uint8Array(capacity);
  // indexOf on a view ending at `end`, so a search never runs on through stale bytes past it.
  let view = bytes.subarray(0, 0);
  return {
    bytes,
    sync(from, end) {
      if (view.length !== end) view = bytes.subarray(0, end);
      for (let q = from; q < end; q++) {
        q = view.indexOf(0xff, q);
        if (q < 0) return -1;
        if (q + 1 === end || (bytes[q + 1] & 0xfe) === 0xf8) return q;
      }
      return -1;
    },
    crc16: (from, to, crc) => crc16(bytes, from, to, crc),
  };
}

function frameScan(capacity: number, wasm: boolean): FlacFrameScan {
  return (wasm ? createFlacFrameScan(capacity, CRC16_16) : null) ?? javaScriptFrameScan(capacity);
}

class Framer implements FlacFramer {
  nextSample = 0;
  /** A frame can hardly exceed its raw PCM size plus headers (RFC 9639, 10: the verbatim fallback). */
  private readonly maxFrameBytes: number;
  /** The buffer and its sync search and CRC-16 (WebAssembly or JavaScript). */
  private scanner: FlacFrameScan;
  private buf: Uint8Array;
  /** buf[0, len): the bytes held. */
  private len = 0;
  /** File offset of buf[0]. */
  private base: number;
  /** File offset just past the last frame settled (decoded, lost or cut off). */
  private endOffset: number;
  /** The open frame's header and start, or null while searching for sync. */
  private cur: FlacFrameHeader | null = null;
  private curStart = 0;
  /** Next index to look for a sync code at. */
  private scan = 0;
  /** CRC-16 of buf[curStart, crcPos). */
  private crc = 0;
  private crcPos = 0;
  /** A sync code where the CRC-16 was 0: where this frame ends if the next header turns out damaged. */
  private lastZero = -1;
  /**
   * The first header continuing the sample count exactly where the open frame's CRC-16 failed: the frame's end
   * if it proves damaged, or a false sync code in its data if the CRC-16 later holds.
   */
  private pendingAt = -1;
  private pendingHeader: FlacFrameHeader | null = null;

  constructor(
    private readonly info: FlacStreamInfo,
    firstOffset: number,
    private readonly events: FlacFramerEvents,
    private readonly wasm: boolean,
  ) {
    this.maxFrameBytes = Math.max(info.maxBlockSize * info.channels * Math.ceil((info.bitsPerSample + 1) / 8) + 1024, info.maxFrameSize) + 64;
    this.scanner = frameScan(Math.max(1 << 20, 2 * this.maxFrameBytes), wasm);
    this.buf = this.scanner.bytes;
    this.base = firstOffset;
    this.endOffset = firstOffset;
  }

  push(bytes: Uint8Array): void {
    this.append(bytes);
    this.process(false);
  }

  /**
   * The end of the stream is the last frame's only boundary, so the open frame is settled on three facts: where
   * its CRC-16 comes to 0 (a zero exactly at the end of the data is the evidence a next header gives mid-stream;
   * a zero earlier may be the frame's end before trailing bytes, or chance: 1 in 65536 per byte), STREAMINFO's
   * total (a header at or past it is a false sync code), and whether libFLAC accepted the frame.
   */
  finish(): { trailingBytes: number } {
    for (;;) {
      this.process(true);
      const h = this.cur;
      if (!h) break;
      const total = this.info.totalSamples;
      if (this.pendingHeader && total > 0 && this.pendingHeader.sampleNumber >= total) {
        // No frame starts at or after the announced end: the pending header is a false sync code in this frame's data.
        this.pendingAt = -1;
        this.pendingHeader = null;
      }
      const pendingAt = this.pendingAt;
      const open = this.crcZeros(this.curStart, h);
      if (this.pendingHeader) {
        const pending = this.crcZeros(pendingAt, this.pendingHeader);
        // The open frame was damaged, and the pending header begins the next one, unless the open frame's
        // CRC-16 holds at the very end of the data (a false sync code in its data) and the pending one's does not.
        // Both cannot hold there: the open frame's CRC-16 failed at the pending header.
        if (pending.atEnd || (!open.atEnd && (pending.last > 0 || open.last <= pendingAt))) {
          this.resolvePending();
          continue;
        }
      }
      if (this.firstDecodableEnd(h) > 0) break;
      if (open.atEnd) {
        // Whole by its CRC-16 to the last byte, yet libFLAC turned it down: decoded as any frame, its finding says why.
        this.close(this.len, true);
      } else if (this.isCutShort(this.len - this.curStart) || total > h.sampleNumber + h.blockSize) {
        // Frames after this one are missing too, so the file was cut, most likely inside this frame.
        this.cutOff();
      } else this.close(this.len, false);
      break;
    }
    return { trailingBytes: this.settleRest() };
  }

  /**
   * The bytes after the last frame: data appended to a complete stream (trailing bytes), or, while STREAMINFO
   * still misses samples, part of the audio: the last frame with its header damaged (a lost sync code or a
   * failing CRC-8) when exactly its samples are missing and it is not shorter than the smallest frame, else the
   * start of a frame the file was cut in, or damage, which the truncated finding reports.
   */
  private settleRest(): number {
    const rest = this.base + this.len - this.endOffset;
    const total = this.info.totalSamples;
    if (rest <= 0) return 0;
    if (total <= this.nextSample) return rest;
    if (this.lastFrameLost() && !this.isCutShort(rest) && (this.info.minFrameSize > 0 || rest > MAX_HEADER_BYTES)) {
      this.gapTo(total, this.endOffset, `lost sync: no valid frame header in the last ${rest} bytes`);
    }
    return 0;
  }

  /**
   * The open frame's end before the end of the data: the first place its CRC-16 comes to 0 at which libFLAC
   * decodes it whole. An earlier zero is chance inside the frame (libFLAC runs out of bytes there), a later
   * one chance in the bytes after it (or zero bytes appended, which keep the CRC-16 at 0), so the first
   * accepted one is where the frame ends and the trailing bytes begin. The frame is closed there; −1 (frame
   * still open, nothing reported) when no zero is accepted among the first few.
   */
  private firstDecodableEnd(h: FlacFrameHeader): number {
    const b = this.buf;
    const from = this.curStart;
    const minEnd = from + h.headerBytes + 2;
    let tries = 0;
    let c = 0;
    for (let i = from; i < this.len && tries < MAX_END_TRIES; i++) {
      c = ((c << 8) & 0xffff) ^ CRC16[(c >> 8) ^ b[i]];
      if (c !== 0 || i + 1 < minEnd) continue;
      tries++;
      this.gapBefore();
      if (this.events.frame(b.subarray(from, i + 1), h, this.base + from, true) === false) continue;
      this.nextSample = h.sampleNumber + h.blockSize;
      this.cur = null;
      this.scan = i + 1;
      this.endOffset = this.base + i + 1;
      this.pendingAt = -1;
      this.pendingHeader = null;
      return i + 1;
    }
    return -1;
  }

  /**
   * Where the CRC-16 of the frame starting at `from` comes to 0 in the data held: the last such place (−1 if
   * none), and whether that is the end of the data. Run once per stream, at its end.
   */
  private crcZeros(from: number, h: FlacFrameHeader): { last: number; atEnd: boolean } {
    const b = this.buf;
    const minEnd = from + h.headerBytes + 2;
    let last = -1;
    let c = 0;
    for (let i = from; i < this.len; i++) {
      c = ((c << 8) & 0xffff) ^ CRC16[(c >> 8) ^ b[i]];
      if (c === 0 && i + 1 >= minEnd) last = i + 1;
    }
    return { last, atEnd: last === this.len && last > from };
  }

  /**
   * The open frame's end before a frame whose sync code was damaged, found when a later header skips frames: a
   * place before `to` where its CRC-16 comes to 0 and exactly one of the two sync bytes (0xFF, 0xF8/0xF9) is
   * intact, as one damaged byte leaves it (RFC 9639, 9.1). Chance gives both facts about once in 10^7 bytes;
   * the frame still goes through libFLAC, which reports it if it is not whole. −1 when there is none.
   */
  private endBeforeBrokenSync(to: number): number {
    const b = this.buf;
    const h = this.cur as FlacFrameHeader;
    const minEnd = this.curStart + h.headerBytes + 2;
    let found = -1;
    let c = 0;
    for (let i = this.curStart; i < to - 1; i++) {
      c = ((c << 8) & 0xffff) ^ CRC16[(c >> 8) ^ b[i]];
      const e = i + 1;
      if (c === 0 && e >= minEnd && (b[e] === 0xff) !== ((b[e + 1] & 0xfe) === 0xf8)) found = e;
    }
    return found;
  }

  /**
   * A frame holding fewer bytes than STREAMINFO's smallest frame (RFC 9639, 8.2) cannot be whole, damaged or
   * not: the file was cut there. Only with a known total, so the missing samples are reported as truncation.
   */
  private isCutShort(bytes: number): boolean {
    return this.info.totalSamples > 0 && bytes < this.info.minFrameSize;
  }

  /** The open frame was cut off by the end of the file: not decoded, and its samples left to the truncated finding. */
  private cutOff(): void {
    this.gapBefore();
    this.cur = null;
    this.scan = this.len;
    this.endOffset = this.base + this.len;
    this.pendingAt = -1;
    this.pendingHeader = null;
  }

  /** STREAMINFO announces more samples than were accounted for, at most one frame's worth. */
  private lastFrameLost(): boolean {
    const total = this.info.totalSamples;
    return total > this.nextSample && total - this.nextSample <= this.info.maxBlockSize;
  }

  private append(bytes: Uint8Array): void {
    if (this.len + bytes.length > this.buf.length) {
      // Drop what is done; grow only when one frame plus the new bytes need it.
      const keepFrom = this.cur ? this.curStart : Math.max(0, this.scan - 1);
      const kept = this.len - keepFrom;
      if (kept + bytes.length > this.buf.length) {
        // A new buffer (and kernel memory, which is never grown) for a frame longer than this one holds.
        const grown = frameScan(Math.max(this.buf.length * 2, kept + bytes.length), this.wasm);
        grown.bytes.set(this.buf.subarray(keepFrom, this.len), 0);
        this.scanner = grown;
        this.buf = grown.bytes;
      } else this.buf.copyWithin(0, keepFrom, this.len);
      this.len = kept;
      this.base += keepFrom;
      this.curStart -= keepFrom;
      this.scan -= keepFrom;
      this.crcPos -= keepFrom;
      if (this.lastZero >= 0) this.lastZero -= keepFrom;
      if (this.pendingAt >= 0) this.pendingAt -= keepFrom;
    }
    this.buf.set(bytes, this.len);
    this.len += bytes.length;
  }

  private gapTo(sample: number, offset: number, why: string): void {
    const to = this.info.totalSamples > 0 ? Math.min(sample, this.info.totalSamples) : sample;
    if (to > this.nextSample) {
      this.events.gap(this.nextSample, to - this.nextSample, offset, why);
      this.nextSample = to;
    }
  }

  private begin(header: FlacFrameHeader, at: number): void {
    this.cur = header;
    this.curStart = at;
    this.crc = 0;
    this.crcPos = at;
    this.scan = at + header.headerBytes + 2;
    this.lastZero = -1;
    this.pendingAt = -1;
    this.pendingHeader = null;
  }

  /** Frames missing before the open one are a gap first, whatever becomes of it. */
  private gapBefore(): void {
    const h = this.cur as FlacFrameHeader;
    if (h.sampleNumber > this.nextSample) this.gapTo(h.sampleNumber, this.base + this.curStart, "lost sync: frames missing before this point");
  }

  /** Ends the open frame at `end`, whole (CRC-16 checked here) or damaged. */
  private close(end: number, isWhole: boolean): void {
    const h = this.cur as FlacFrameHeader;
    const offset = this.base + this.curStart;
    this.gapBefore();
    if (isWhole) {
      this.events.frame(this.buf.subarray(this.curStart, end), h, offset);
      this.nextSample = h.sampleNumber + h.blockSize;
    } else this.gapTo(h.sampleNumber + h.blockSize, offset, "frame CRC-16 mismatch");
    this.cur = null;
    this.scan = end;
    this.endOffset = this.base + end;
    this.pendingAt = -1;
    this.pendingHeader = null;
  }

  /** The open frame was damaged after all: it ends at the pending header, which opens the next frame. */
  private resolvePending(): void {
    const at = this.pendingAt;
    const next = this.pendingHeader as FlacFrameHeader;
    this.close(at, false);
    this.begin(next, at);
  }

  /**
   * The open frame is longer than any real frame: it ended at the pending header (damaged), or whole at a later
   * sync code where its CRC-16 held but no header followed, or whole before a damaged sync code; else it is lost
   * up to that length and the search starts again.
   */
  private giveUp(): void {
    if (this.pendingHeader && this.lastZero <= this.pendingAt) {
      this.resolvePending();
      return;
    }
    // Whole up to a sync code whose header was damaged, or up to a damaged sync code; else lost.
    const end = this.lastZero > this.curStart ? this.lastZero : this.endBeforeBrokenSync(this.curStart + this.maxFrameBytes);
    if (end > 0) this.close(end, true);
    else this.close(this.curStart + this.maxFrameBytes, false);
  }

  private process(isFinal: boolean): void {
    const info = this.info;
    for (;;) {
      const b = this.buf;
      const len = this.len;
      // The next sync code, or a 0xFF in the last byte held that the next bytes may make one.
      const q = this.scanner.sync(this.scan, len);
      if (q < 0 || q + 1 >= len) {
        if (q >= 0 && !isFinal) this.scan = q;
        else this.scan = Math.max(this.scan, len);
        // A frame that never ends within any real frame's length is given up; the search starts again.
        if (this.cur && len - this.curStart > this.maxFrameBytes) this.giveUp();
        else return;
        continue;
      }
      if (q + MAX_HEADER_BYTES > len && !isFinal) {
        this.scan = q;
        return;
      }
      const h = this.cur;
      if (!h) {
        // Searching: the next header that fits and does not go back in time.
        const found = parseFrameHeader(b, q, len, info);
        if (found && found.sampleNumber >= this.nextSample) this.begin(found, q);
        else this.scan = q + 1;
        continue;
      }
      if (q - this.curStart > this.maxFrameBytes) {
        this.giveUp();
        continue;
      }
      this.crc = this.scanner.crc16(this.crcPos, q, this.crc);
      this.crcPos = q;
      if (this.crc === 0) this.lastZero = q;
      const expected = h.sampleNumber + h.blockSize;
      const next = parseFrameHeader(b, q, len, info);
      if (!next || next.sampleNumber < expected) {
        this.scan = q + 1;
        continue;
      }
      if (this.crc === 0) {
        this.close(q, true);
        this.begin(next, q);
        continue;
      }
      if (next.sampleNumber > expected + 16 * info.maxBlockSize) {
        this.scan = q + 1;
        continue;
      }
      if (next.sampleNumber === expected) {
        // No CRC-16 here: damage, or a false sync code in the data. With two such headers and no CRC-16 at
        // either, the earlier one is likelier the false one.
        this.pendingAt = q;
        this.pendingHeader = next;
        this.scan = q + 1;
        continue;
      }
      // A frame was whole up to an earlier sync code, and what followed it lost its header.
      const wholeEarlier = next.sampleNumber > expected && this.lastZero > Math.max(this.curStart, this.pendingAt);
      if (this.pendingHeader && !wholeEarlier) {
        this.resolvePending();
        continue;
      }
      // No sync code where the frame ended: the next frame's own sync code may be the damaged part.
      const brokenSync = wholeEarlier || this.pendingHeader || next.sampleNumber <= expected ? -1 : this.endBeforeBrokenSync(q);
      if (brokenSync > 0) this.close(brokenSync, true);
      else this.close(wholeEarlier ? this.lastZero : q, wholeEarlier);
      this.begin(next, q);
    }
  }
}
