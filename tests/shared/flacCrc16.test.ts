/**
 * The FLAC framer's table-driven CRC-16 (shared/src/flac/flacFramer.ts, slice-by-16) against the frame footer's
 * definition in RFC 9639, 9.3: polynomial x^16 + x^15 + x^2 + 1 (0x8005), MSB first, initial value 0, no final
 * XOR, computed bit by bit (tests/helpers/crc16Reference.ts). Every start alignment, length (including the tails shorter than one 16-byte
 * step) and carried-in register is compared; Debian's flac-made files in tests/cli/audioFormats.test.ts and
 * tests/cli/flacFraming.test.ts check the same function on real frames.
 */
import { describe, expect, it } from "vitest";
import { crc16 } from "../../shared/src/flac/flacFramer.ts";
import { crc16Bitwise } from "../helpers/crc16Reference.ts";

function randomBytes(n: number, seed: number): Uint8Array {
  const out = new Uint8Array(n);
  let s = seed >>> 0;
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    out[i] = s >>> 24;
  }
  return out;
}

describe("FLAC frame CRC-16 (RFC 9639, 9.3)", () => {
  it("gives the catalogue check value of this parameter set for the ASCII digits 1 to 9", () => {
    // Polynomial 0x8005, init 0, unreflected, no XOR out: listed as CRC-16/UMTS (alias CRC-16/BUYPASS) with
    // check value 0xFEE8 in the catalogue of parametrised CRC algorithms (from memory); the bitwise form agrees.
    const digits = new TextEncoder().encode("123456789");
    expect(crc16Bitwise(digits, 0, digits.length, 0)).toBe(0xfee8);
    expect(crc16(digits, 0, digits.length, 0)).toBe(0xfee8);
  });

  it("equals the bitwise definition for every start, length up to 70 bytes and carried-in register", () => {
    const b = randomBytes(200, 7);
    for (let from = 0; from < 17; from++) {
      for (let length = 0; length <= 70; length++) {
        for (const carried of [0, 1, 0x8005, 0xffff, 0x1234]) {
          expect(crc16(b, from, from + length, carried), `from ${from}, length ${length}, carried ${carried}`).toBe(crc16Bitwise(b, from, from + length, carried));
        }
      }
    }
  });

  it("continues across any split point, and comes to 0 after a frame followed by its own CRC (big-endian)", () => {
    const frame = randomBytes(4321, 11);
    const whole = crc16Bitwise(frame, 0, frame.length, 0);
    for (const split of [0, 1, 15, 16, 17, 1000, 4320, 4321]) {
      expect(crc16(frame, split, frame.length, crc16(frame, 0, split, 0))).toBe(whole);
    }
    const withFooter = new Uint8Array([...frame, whole >> 8, whole & 0xff]);
    expect(crc16(withFooter, 0, withFooter.length, 0)).toBe(0);
    withFooter[1234] ^= 0x10;
    expect(crc16(withFooter, 0, withFooter.length, 0)).not.toBe(0);
  });
});
