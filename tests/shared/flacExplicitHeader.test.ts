/**
 * Frame headers rewritten to state the rate and depth they left to STREAMINFO (shared/src/flac/flacExplicitHeader.ts),
 * on frames built here bit by bit from RFC 9639 (9.1) with CRC-8 and CRC-16 computed bitwise, independently of the
 * framer's tables. tests/cli/flacRateFromStreamInfo.test.ts checks that libFLAC then decodes files from Debian's
 * flac as `flac -d` does.
 */
import { describe, expect, it } from "vitest";
import { createExplicitHeaders, frameHeaderBytes, nearestRateCode } from "../../shared/src/flac/flacExplicitHeader.ts";
import { constant, crc, frame, SIZE_CODE, verbatim } from "../helpers/flacFrameBuilder.ts";

/** The frame with its rate code and/or sample-size code set to 0 ("from STREAMINFO"), both CRCs recomputed bitwise. */
function deferred(f: Uint8Array, rate: boolean, depth: boolean): Uint8Array {
  const out = Array.from(f.subarray(0, f.length - 2));
  if (rate) out[2] &= 0xf0;
  if (depth) out[3] &= 0xf1;
  const headerBytes = frameHeaderBytes(f)!;
  out[headerBytes - 1] = crc(out.slice(0, headerBytes - 1), 8, 0x07);
  const c16 = crc(out, 16, 0x8005);
  return Uint8Array.from([...out, c16 >> 8, c16 & 0xff]);
}

describe("FLAC frame headers made to state rate and depth (RFC 9639, 9.1.2, 9.1.4, 9.1.8, 9.3)", () => {
  // Stereo, 16-bit, 48 kHz (code 10): what the rewrite of a header deferring both must give back exactly.
  const stated = frame(SIZE_CODE[16], 1, 16, [verbatim(0, 3), constant(0, -5)]);

  it("reads header lengths from the block-size, rate and coded-number fields", () => {
    expect(frameHeaderBytes(stated)).toBe(7); // 4 fixed + 1-byte number + 1 block-size byte + CRC-8
    const h = (b2: number, number: number[]) => Uint8Array.from([0xff, 0xf8, b2, 0x08, ...number, 0, 0, 0, 0, 0]);
    expect(frameHeaderBytes(h(0x7c, [0x05]))).toBe(4 + 1 + 2 + 1 + 1); // block code 7 (2 bytes), rate code 12 (1 byte)
    expect(frameHeaderBytes(h(0xcd, [0xc2, 0x80]))).toBe(4 + 2 + 0 + 2 + 1); // 2-byte number, rate code 13 (2 bytes)
    expect(frameHeaderBytes(h(0x1e, [0xe1, 0x80, 0x80]))).toBe(4 + 3 + 0 + 2 + 1); // 3-byte number, rate code 14
    expect(frameHeaderBytes(h(0x10, [0x80]))).toBeNull(); // a continuation byte cannot start the number
  });

  it("takes the table's nearest rate for the header (codes 1-11)", () => {
    expect([70001, 44101, 48000, 8000, 7350, 384000, 100000].map(nearestRateCode)).toEqual([1, 9, 10, 4, 4, 3, 11]);
  });

  it("gives back the stated frame, bit for bit, from one deferring rate and depth", () => {
    const d = deferred(stated, true, true);
    expect(d[2] & 0x0f).toBe(0);
    expect((d[3] >> 1) & 7).toBe(0);
    const out = createExplicitHeaders({ sampleRateHz: 48000, bitsPerSample: 16 }).explicit(d);
    expect(Array.from(out)).toEqual(Array.from(stated));
  });

  it("states a rate the header cannot code with the nearest table code, and keeps the frame's length and body", () => {
    const d = deferred(stated, true, false);
    const out = createExplicitHeaders({ sampleRateHz: 70001, bitsPerSample: 16 }).explicit(d);
    expect(out.length).toBe(d.length);
    expect(out[2]).toBe((d[2] & 0xf0) | 1); // 88.2 kHz, nearest to 70 001 Hz
    expect(Array.from(out.subarray(7, out.length - 2))).toEqual(Array.from(d.subarray(7, d.length - 2)));
    expect(out[6]).toBe(crc(Array.from(out.subarray(0, 6)), 8, 0x07));
    const c16 = crc(Array.from(out.subarray(0, out.length - 2)), 16, 0x8005);
    expect([out[out.length - 2], out[out.length - 1]]).toEqual([c16 >> 8, c16 & 0xff]);
  });

  it("leaves a depth without a header code (23 bits) at 0 and states the rate", () => {
    const d = deferred(stated, true, true);
    const out = createExplicitHeaders({ sampleRateHz: 48000, bitsPerSample: 23 }).explicit(d);
    expect(out[2] & 0x0f).toBe(10);
    expect((out[3] >> 1) & 7).toBe(0);
  });

  it("hands a frame that states both on untouched, and reuses its buffer from frame to frame", () => {
    const headers = createExplicitHeaders({ sampleRateHz: 48000, bitsPerSample: 16 });
    expect(headers.explicit(stated)).toBe(stated);
    const a = headers.explicit(deferred(stated, true, false));
    const b = headers.explicit(deferred(stated, false, true));
    expect(a.buffer).toBe(b.buffer);
    expect(Array.from(b)).toEqual(Array.from(stated));
  });
});
