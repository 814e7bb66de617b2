/**
 * The odd-depth frame rewrite (shared/src/flac/flacDepthWidening.ts) on frames built here bit by bit from
 * RFC 9639 (section 9): each subframe type (CONSTANT, VERBATIM, FIXED, LPC), both residual methods with Rice
 * parameters and escaped partitions, wasted bits already present, and the stereo side channel one bit wider.
 * The rewrite must give exactly the frame built at the container depth with every wasted-bit count grown by
 * the difference: same bodies, new sample-size code, CRC-8 and CRC-16 (computed here bitwise, independently of
 * the framer's tables). tests/cli/flacOddDepths.test.ts checks that libFLAC decodes such frames as Debian's flac does.
 */
import { describe, expect, it } from "vitest";
import { containerDepth, createFrameWidener, widenStreamHeader } from "../../shared/src/flac/flacDepthWidening.ts";
import type { FlacStreamInfo } from "../../shared/src/flac/flacLayout.ts";

class Bits {
  bits: number[] = [];
  put(v: number, n: number): this {
    for (let i = n - 1; i >= 0; i--) this.bits.push(Math.floor(v / 2 ** i) % 2);
    return this;
  }
  /** Two's complement in n bits. */
  signed(v: number, n: number): this {
    return this.put(v < 0 ? v + 2 ** n : v, n);
  }
  unary(zeros: number): this {
    for (let i = 0; i < zeros; i++) this.bits.push(0);
    this.bits.push(1);
    return this;
  }
  bytes(): number[] {
    while (this.bits.length % 8) this.bits.push(0);
    const out: number[] = [];
    for (let i = 0; i < this.bits.length; i += 8) out.push(parseInt(this.bits.slice(i, i + 8).join(""), 2));
    return out;
  }
}

/** RFC 9639, 9.1.8 and 9.3, bit by bit: CRC-8 poly 0x07, CRC-16 poly 0x8005, MSB first, initial 0. */
function crc(bytes: number[], width: 8 | 16, poly: number): number {
  let c = 0;
  const top = 1 << (width - 1);
  const mask = (1 << width) - 1;
  for (const b of bytes) {
    c ^= b << (width - 8);
    for (let k = 0; k < 8; k++) c = c & top ? ((c << 1) ^ poly) & mask : (c << 1) & mask;
  }
  return c;
}

interface Sub {
  /** Wasted bits as coded in the original frame. */
  k: number;
  /** Body writer at n = subframe bits − k. */
  type: number;
  body: (w: Bits, n: number) => void;
}

function residual(w: Bits, method: 0 | 1, partitionOrder: number, parts: ({ rice: number; values: number[] } | { escape: number; values: number[] })[]): void {
  w.put(method, 2).put(partitionOrder, 4);
  const pb = method === 0 ? 4 : 5;
  for (const p of parts) {
    if ("escape" in p) {
      w.put(method === 0 ? 15 : 31, pb).put(p.escape, 5);
      for (const v of p.values) w.signed(v, p.escape);
    } else {
      w.put(p.rice, pb);
      for (const v of p.values) {
        const u = v >= 0 ? 2 * v : -2 * v - 1; // zigzag (RFC 9639, 9.2.7.3)
        w.unary(Math.floor(u / 2 ** p.rice)).put(u % 2 ** p.rice, p.rice);
      }
    }
  }
}

const BLOCK = 16;
const SIZE_CODE: Record<number, number> = { 8: 1, 12: 2, 16: 4, 20: 5, 24: 6, 32: 7 };

/** A whole frame: fixed block size 16 (code 6, one byte), 48 kHz (code 10), frame number 0. */
function frame(sizeCode: number, channelCode: number, bps: number, subs: Sub[], extraK = 0): Uint8Array {
  const head = [0xff, 0xf8, (6 << 4) | 10, (channelCode << 4) | (sizeCode << 1), 0x00, BLOCK - 1];
  head.push(crc(head, 8, 0x07));
  const side = channelCode === 8 || channelCode === 10 ? 1 : channelCode === 9 ? 0 : -1;
  const w = new Bits();
  for (const b of head) w.put(b, 8);
  subs.forEach((s, c) => {
    const k = s.k + extraK;
    w.put(0, 1).put(s.type, 6);
    if (k > 0) w.put(1, 1).unary(k - 1);
    else w.put(0, 1);
    s.body(w, bps + (c === side ? 1 : 0) - s.k);
  });
  const bytes = w.bytes();
  const c16 = crc(bytes, 16, 0x8005);
  return Uint8Array.from([...bytes, c16 >> 8, c16 & 0xff]);
}

const info = (bits: number, channels: number): FlacStreamInfo => ({
  minBlockSize: BLOCK, maxBlockSize: BLOCK, minFrameSize: 0, maxFrameSize: 0, sampleRateHz: 48000, channels, bitsPerSample: bits, totalSamples: BLOCK, md5: null,
});

const constant = (k: number, v: number): Sub => ({ k, type: 0, body: (w, n) => void w.signed(v, n) });
const verbatim = (k: number, seed: number): Sub => ({
  k, type: 1, body: (w, n) => { for (let i = 0; i < BLOCK; i++) w.signed(((i * 7919 + seed) % 2 ** (n - 1)) - 2 ** (n - 2), n); },
});
/** FIXED order 2, method 0, two partitions: Rice 3, then escaped at 7 bits. */
const fixed = (k: number): Sub => ({
  k, type: 8 + 2, body: (w, n) => {
    w.signed(5, n).signed(-3, n);
    residual(w, 0, 1, [{ rice: 3, values: [1, -2, 9, 0, 4, -7] }, { escape: 7, values: [63, -64, 0, 1, -1, 20, -20, 5] }]);
  },
});
/** LPC order 3, precision 12, shift 9, method 1 (5-bit parameters, escape 31), one partition of order 0 tested too. */
const lpc = (k: number, escape: boolean): Sub => ({
  k, type: 32 + 3 - 1, body: (w, n) => {
    w.signed(100, n).signed(-50, n).signed(25, n);
    w.put(11, 4).put(9, 5).signed(1000, 12).signed(-512, 12).signed(77, 12);
    const values = [0, 1, -1, 300, -300, 2, 17, -18, 1, 0, 0, 5, -5];
    residual(w, 1, 0, [escape ? { escape: 10, values } : { rice: 17, values }]);
  },
});
/** FIXED order 0 with no residual bits at all: escape width 0 (RFC 9639, 9.2.7.1). */
const zeroEscape = (k: number): Sub => ({ k, type: 8, body: (w) => residual(w, 0, 2, [0, 1, 2, 3].map(() => ({ escape: 0, values: [0, 0, 0, 0] }))) });

describe("odd-depth FLAC frames rewritten at the container depth (RFC 9639, 9.1.4 and 9.2.2)", () => {
  it("containerDepth: the next of 8, 16, 24, 32; nothing outside 4..32", () => {
    expect([4, 7, 8, 9, 12, 16, 17, 20, 24, 25, 28, 32].map(containerDepth)).toEqual([8, 8, 8, 16, 16, 16, 24, 24, 24, 32, 32, 32]);
    expect([3, 33, 0, 12.5].map(containerDepth)).toEqual([null, null, null, null]);
  });

  const cases: [string, number, number, number, Sub[]][] = [
    ["20-bit mono CONSTANT", 20, 0, 1, [constant(0, -123456)]],
    ["20-bit mono VERBATIM with 3 wasted bits", 20, 0, 1, [verbatim(3, 11)]],
    ["12-bit mono FIXED, Rice and escaped partitions", 12, 0, 1, [fixed(0)]],
    ["20-bit mono LPC, 5-bit Rice parameters", 20, 0, 1, [lpc(0, false)]],
    ["20-bit mono LPC, escaped", 20, 0, 1, [lpc(2, true)]],
    ["12-bit mono, escape of width 0", 12, 0, 1, [zeroEscape(0)]],
    ["20-bit stereo independent", 20, 1, 2, [fixed(1), verbatim(0, 3)]],
    ["20-bit left/side: channel 1 is 21 bits", 20, 8, 2, [verbatim(0, 5), verbatim(0, 9)]],
    ["20-bit side/right: channel 0 is 21 bits", 20, 9, 2, [verbatim(2, 5), lpc(0, false)]],
    ["12-bit mid/side: channel 1 is 13 bits", 12, 10, 2, [constant(0, 7), verbatim(1, 2)]],
    ["7-bit mono (size code 0: from STREAMINFO)", 7, 0, 1, [verbatim(0, 1)]],
    ["28-bit 3 channels", 28, 2, 3, [lpc(0, true), verbatim(4, 8), constant(0, -1)]],
  ];
  it.each(cases)("%s", (_label, bps, channelCode, channels, subs) => {
    const c = containerDepth(bps)!;
    const input = frame(SIZE_CODE[bps] ?? 0, channelCode, bps, subs);
    const expected = frame(SIZE_CODE[c], channelCode, bps, subs, c - bps);
    const widener = createFrameWidener(info(bps, channels));
    const out = widener.widen(input);
    expect(typeof out).not.toBe("string");
    expect(Array.from(out as Uint8Array)).toEqual(Array.from(expected));
    // The frame's own bits are untouched (the output buffer is the widener's, not the input).
    expect(Array.from(frame(SIZE_CODE[bps] ?? 0, channelCode, bps, subs))).toEqual(Array.from(input));
  });

  it("frames that are not well formed come back as a reason, not as a frame", () => {
    const widener = createFrameWidener(info(20, 1));
    const good = frame(5, 0, 20, [fixed(0)]);
    // One byte too many before the CRC-16 (RFC 9639 allows only zero padding to the byte boundary).
    const long = [...good.subarray(0, good.length - 2), 0];
    const c16 = crc(long, 16, 0x8005);
    expect(widener.widen(Uint8Array.from([...long, c16 >> 8, c16 & 0xff]))).toMatch(/subframes end at byte/);
    // A reserved subframe type (0b000010).
    expect(widener.widen(frame(5, 0, 20, [{ k: 0, type: 2, body: () => {} }]))).toMatch(/reserved subframe type 2/);
    // A body cut short: VERBATIM announced but only CONSTANT's bits present.
    expect(widener.widen(frame(5, 0, 20, [{ k: 0, type: 1, body: (w, n) => void w.signed(1, n) }]))).toMatch(/past the frame's CRC-16/);
    // A partition order that does not divide the block for the predictor order.
    expect(widener.widen(frame(5, 0, 20, [{ k: 0, type: 8 + 4, body: (w, n) => { for (let i = 0; i < 4; i++) w.signed(0, n); w.put(0, 2).put(3, 4); } }]))).toMatch(/partition order 3/);
    // After all that, a good frame still rewrites (no state left from the failures).
    expect(typeof widener.widen(good)).not.toBe("string");
  });

  it("the STREAMINFO given to the decoder says the container depth, with sizes and MD5 unknown", () => {
    const header = new Uint8Array(42);
    header.set([0x66, 0x4c, 0x61, 0x43, 0x80, 0, 0, 34]);
    header.set([0, 16, 0, 16, 0, 0, 9, 0, 0, 99, 0x0b, 0xb8, 0x02 | 0x01, 0x30 | 0x00], 8); // 48 kHz, stereo, 20 bits (code 19)
    header.fill(0xab, 26, 42);
    const out = widenStreamHeader(header, 24);
    expect((((out[20] & 1) << 4) | (out[21] >> 4)) + 1).toBe(24);
    expect(out[20] & 0xfe).toBe(header[20] & 0xfe); // rate and channels kept
    expect(out[21] & 0x0f).toBe(header[21] & 0x0f); // total samples' top bits kept
    expect(Array.from(out.subarray(12, 18))).toEqual([0, 0, 0, 0, 0, 0]);
    expect(Array.from(out.subarray(26, 42)).every((b) => b === 0)).toBe(true);
    expect(() => widenStreamHeader(header.subarray(0, 30), 24)).toThrow(/42 bytes/);
  });
});
