/**
 * The FLAC frame footer's CRC-16 by its definition, bit by bit (RFC 9639, 9.3: polynomial x^16 + x^15 + x^2 + 1
 * (0x8005), MSB first, initial value 0, no final XOR), for the tests of the framer's fast forms.
 */
export function crc16Bitwise(b: Uint8Array, from: number, to: number, crc: number): number {
  let c = crc;
  for (let i = from; i < to; i++) {
    c ^= b[i] << 8;
    for (let k = 0; k < 8; k++) c = c & 0x8000 ? ((c << 1) ^ 0x8005) & 0xffff : (c << 1) & 0xffff;
  }
  return c;
}
