/**
 * The FLAC reader's SIMD rescaling (shared/src/flac/flacRescale.wat) against the definitions it implements:
 * the reader's scale is code / 2^(bits−1) (the WAV reader's, so a FLAC and its WAV give the same samples), and
 * STREAMINFO's MD5 input is the codes interleaved, little-endian, in whole bytes (RFC 9639, 8.2). Every code at the extremes and a spread of others, 16 and 24 bits, any MD5 offset.
 * tests/cli/audioFormats.test.ts and tests/cli/flacFraming.test.ts check the same path on Debian flac's files.
 */
import { describe, expect, it } from "vitest";
import { createFlacRescale } from "../../shared/src/flac/flacRescale.ts";

function codesFor(bits: number, n: number): Int32Array {
  const full = 2 ** (bits - 1);
  const out = new Int32Array(n);
  const edges = [-full, -full + 1, -1, 0, 1, full - 2, full - 1];
  let s = 99;
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    out[i] = i < edges.length ? edges[i] : Math.floor((s / 2 ** 32) * 2 * full) - full;
  }
  return out;
}

describe.each([16, 24])("FLAC stereo rescaling, %i bits", (bits) => {
  const width = bits / 8;
  const full = 2 ** (bits - 1);
  const capacity = 4096;
  const blockFrames = 1000;
  const k = createFlacRescale({ frameCapacity: capacity, blockFrames, md5Bytes: 1 << 16 });

  /** n frames on the reader's scale at `to`, their little-endian MD5 bytes at `md5At`, from the codes at `from`. */
  function expectFrames(left: Int32Array, right: Int32Array, from: number, to: number, md5At: number, n: number): void {
    const kernel = k!;
    for (let i = 0; i < n; i++) {
      expect(kernel.left[to + i]).toBe(left[from + i] / full);
      expect(kernel.right[to + i]).toBe(right[from + i] / full);
      for (let b = 0; b < width; b++) {
        const at = md5At + i * 2 * width + b;
        expect(kernel.md5[at], `frame ${i} left byte ${b}`).toBe((left[from + i] >> (8 * b)) & 0xff);
        expect(kernel.md5[at + width], `frame ${i} right byte ${b}`).toBe((right[from + i] >> (8 * b)) & 0xff);
      }
    }
  }

  it("runs here (WebAssembly SIMD)", () => {
    expect(k).not.toBeNull();
  });

  it.each([
    [0, 0, 0],
    [8, 12, 3],
    [100, 500, 1],
  ])("gives the codes on the reader's scale and the MD5 bytes (from %i, into %i, MD5 at byte %i)", (from, to, md5At) => {
    const kernel = k!;
    const n = 400;
    const left = codesFor(bits, capacity);
    const right = codesFor(bits, capacity).reverse();
    // libFLAC's int32 codes as cli/src/audio/libflacFrames.ts hands them out.
    kernel.input.set(left, 0);
    kernel.input.set(right, capacity);
    kernel.md5.fill(0xee);
    kernel.left.fill(7);
    kernel.stereo(from, n, to, md5At, width, 1 / full);
    expectFrames(left, right, from, to, md5At, n);
    // Nothing written past the n frames.
    expect(kernel.md5[md5At + n * 2 * width]).toBe(0xee);
    if (md5At > 0) expect(kernel.md5[md5At - 1]).toBe(0xee);
    expect(kernel.left[to + n]).toBe(7);
  });
});
