/**
 * The odd-depth frame rewrite (shared/src/flac/flacDepthWidening.ts) on frames built here bit by bit from
 * RFC 9639 (section 9): each subframe type (CONSTANT, VERBATIM, FIXED, LPC), both residual methods with Rice
 * parameters and escaped partitions, wasted bits already present, and the stereo side channel one bit wider.
 * The rewrite must give exactly the frame built at the container depth with every wasted-bit count grown by
 * the difference: same bodies, new sample-size code, CRC-8 and CRC-16 (computed here bitwise, independently of
 * the framer's tables). tests/cli/flacOddDepths.test.ts checks that libFLAC decodes such frames as Debian's flac does.
 */
import { describe, expect, it } from "vitest";
import { containerDepth, createFrameWidener } from "../../shared/src/flac/flacDepthWidening.ts";
import type { FlacStreamInfo } from "../../shared/src/flac/flacLayout.ts";
import { BLOCK, constant, crc, fixed, frame, lpc, SIZE_CODE, verbatim, zeroEscape, type Sub } from "../helpers/flacFrameBuilder.ts";

const info = (bits: number, channels: number): FlacStreamInfo => ({
  minBlockSize: BLOCK, maxBlockSize: BLOCK, minFrameSize: 0, maxFrameSize: 0, sampleRateHz: 48000, channels, bitsPerSample: bits, totalSamples: BLOCK, md5: null,
});

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
});
