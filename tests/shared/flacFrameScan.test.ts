/**
 * The FLAC framer's WebAssembly sync search and CRC-16 (shared/src/flac/flacFrameScan.wat) against their
 * definitions: a frame sync code is 0xFF then 0xF8 or 0xF9 (RFC 9639, 9.1: fourteen 1 bits, a reserved 0 and the
 * blocking-strategy bit), and the frame footer's CRC-16 is polynomial 0x8005, MSB first, initial 0, no final XOR
 * (RFC 9639, 9.3), computed bit by bit (tests/helpers/crc16Reference.ts), with the catalogue check value 0xFEE8 for "123456789" (CRC-16/UMTS,
 * from memory; tests/shared/flacCrc16.test.ts checks the JavaScript form the same way).
 * tests/cli/flacFrameScanFramer.test.ts runs the whole framer with and without the kernel on Debian flac's files.
 */
import { describe, expect, it } from "vitest";
import { createFlacFrameScan } from "../../shared/src/flac/flacFrameScan.ts";
import { crc16Bitwise } from "../helpers/crc16Reference.ts";

/** The definition: first q in [from, end) with 0xFF then 0xF8/0xF9, or 0xFF as the last byte; else −1. */
function syncByDefinition(b: Uint8Array, from: number, end: number): number {
  for (let q = from; q < end; q++) {
    if (b[q] === 0xff && (q + 1 === end || b[q + 1] === 0xf8 || b[q + 1] === 0xf9)) return q;
  }
  return -1;
}

/** The slice-by-16 table the framer hands the kernel, built here from the byte-wise definition. */
function slice16Table(): Uint16Array {
  const t = new Uint16Array(16 * 256);
  for (let x = 0; x < 256; x++) t[x] = crc16Bitwise(Uint8Array.of(x), 0, 1, 0);
  for (let k = 1; k < 16; k++) {
    for (let x = 0; x < 256; x++) {
      const r = t[(k - 1) * 256 + x];
      t[k * 256 + x] = ((r << 8) & 0xffff) ^ t[r >> 8];
    }
  }
  return t;
}

function randomBytes(n: number, seed: number, ffShare: number): Uint8Array {
  const out = new Uint8Array(n);
  let s = seed >>> 0;
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    // Plenty of 0xFF and of 0xF8/0xF9 after it, so near-misses and hits fall on every lane of a 16-byte step.
    const r = s >>> 24;
    out[i] = r < ffShare ? 0xff : r < 2 * ffShare ? 0xf8 | (r & 1) : r < 2 * ffShare + 8 ? 0xfa : s >>> 16;
  }
  return out;
}

describe("FLAC frame scan kernel (WebAssembly SIMD)", () => {
  const capacity = 4096;
  const scan = createFlacFrameScan(capacity, slice16Table());

  it("runs here", () => {
    expect(scan).not.toBeNull();
  });

  it("gives the catalogue check value for the ASCII digits 1 to 9, at every alignment", () => {
    const k = scan!;
    const digits = new TextEncoder().encode("123456789");
    for (let at = 0; at < 20; at++) {
      k.bytes.set(digits, at);
      expect(k.crc16(at, at + digits.length, 0)).toBe(0xfee8);
    }
  });

  it("equals the bitwise CRC-16 for every start, length up to 100 bytes and carried-in register", () => {
    const k = scan!;
    k.bytes.set(randomBytes(capacity, 5, 40));
    for (let from = 0; from < 17; from++) {
      for (let length = 0; length <= 100; length++) {
        for (const carried of [0, 1, 0x8005, 0xffff, 0x1234]) {
          expect(k.crc16(from, from + length, carried), `from ${from}, length ${length}, carried ${carried}`).toBe(crc16Bitwise(k.bytes, from, from + length, carried));
        }
      }
    }
    expect(k.crc16(3, capacity - 5, 0x4321)).toBe(crc16Bitwise(k.bytes, 3, capacity - 5, 0x4321));
  });

  it("finds the first sync code at every start and end, never one completed by bytes past the end", () => {
    const k = scan!;
    for (const seed of [1, 2, 3]) {
      const data = randomBytes(600, seed, 12);
      k.bytes.fill(0xf8);
      k.bytes.set(data);
      for (let end = 0; end <= 80; end++) {
        for (let from = 0; from <= end + 1; from++) {
          expect(k.sync(from, end), `seed ${seed}, from ${from}, end ${end}`).toBe(syncByDefinition(k.bytes, from, end));
        }
      }
      for (let from = 0; from < 600; from += 7) expect(k.sync(from, 600)).toBe(syncByDefinition(k.bytes, from, 600));
    }
    // A 0xFF just before the end, followed in memory by 0xF8 the caller has not put there yet: a maybe, at end − 1.
    k.bytes.fill(0);
    k.bytes[40] = 0xff;
    k.bytes[41] = 0xf8;
    expect(k.sync(0, 41)).toBe(40);
    k.bytes[40] = 0;
    k.bytes[39] = 0xff;
    expect(k.sync(0, 41)).toBe(-1);
    expect(k.sync(0, capacity)).toBe(-1);
  });
});
