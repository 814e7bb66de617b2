import { crc16, crc8 } from "../../shared/src/flac/flacFramer.ts";

/**
 * Rewrites every frame of an encoded FLAC (frame offsets from `flac -a`, or the reader's) so its header leaves
 * the sample rate (and with `depth`, the sample size) to STREAMINFO: code 0 (RFC 9639, 9.1: byte 2's low nibble,
 * byte 3's bits 3-1), with the header's CRC-8 and the frame's CRC-16 recomputed. The CRC-8 sits after the
 * one-byte frame number (frames below 128) and any block-size bytes (code 6: one, code 7: two). Each frame
 * must state 48 kHz (code 10) to begin with.
 */
export function deferToStreamInfo(bytes: Uint8Array, offsets: readonly number[], { depth }: { depth: boolean }): void {
  const ends = [...offsets.slice(1), bytes.length];
  offsets.forEach((at, k) => {
    const end = ends[k];
    if ((bytes[at + 2] & 0x0f) !== 10) throw new Error(`frame at byte ${at}: rate code ${bytes[at + 2] & 0x0f}, expected 10 (48 kHz)`);
    bytes[at + 2] &= 0xf0;
    if (depth) bytes[at + 3] &= 0xf1;
    const sizeCode = bytes[at + 2] >> 4;
    const crcAt = at + 5 + (sizeCode === 7 ? 2 : sizeCode === 6 ? 1 : 0);
    bytes[crcAt] = crc8(bytes, at, crcAt);
    const c = crc16(bytes, at, end - 2, 0);
    bytes[end - 2] = c >> 8;
    bytes[end - 1] = c & 0xff;
  });
}
