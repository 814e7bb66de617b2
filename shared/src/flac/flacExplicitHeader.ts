/**
 * Frame headers that state their own sample rate and depth, for a decoder that must never be given STREAMINFO.
 *
 * A frame header may leave its rate or depth to STREAMINFO (code 0, RFC 9639, 9.1.2 and 9.1.4); Debian's flac
 * 1.4 writes rate code 0 for every rate it cannot code in the header: above 65 535 Hz and not a multiple of
 * 10 Hz (e.g. 70 001 Hz). libFLAC decodes such a frame only after it has read a STREAMINFO block, and the
 * WebAssembly build we use (@wasm-audio-decoders/flac 0.2.x) faults (out-of-bounds memory access) a few frames
 * after it has read one: measured 2026-12-05 on files from Debian's flac with rate code 0, 2 to 8 channels, 12, 16,
 * 20, 23 and 24 bits and block sizes 100 to 16 384 (29 of 154 such files), whatever the STREAMINFO said (its
 * channels, depth, rate, block and frame sizes, total and MD5 varied: the same frame faulted), while the same
 * frames decode whole without it. So such a frame is rewritten instead: a rate code with no extra header
 * bytes (the table's nearest rate: the decoder only echoes it, the reader takes STREAMINFO's), the stream's
 * own depth code when it has one, and the CRC-8 (9.1.8) and CRC-16 (9.3) recomputed. The header keeps its
 * length, so the frame's body is copied as it is. Pure: no I/O; one output buffer reused from frame to frame.
 */
import { crc16, crc8 } from "./flacFramer.ts";

/** The sample rates of header codes 1–11 (RFC 9639, 9.1.2), indexed by code. */
const CODED_RATES = [0, 88200, 176400, 192000, 8000, 16000, 22050, 24000, 32000, 44100, 48000, 96000];
/** Header codes of the depths that have one (RFC 9639, 9.1.4). */
const DEPTH_CODE: Readonly<Record<number, number>> = { 8: 1, 12: 2, 16: 4, 20: 5, 24: 6, 32: 7 };

/** Rate code 1–11 whose rate is nearest `rateHz`. */
export function nearestRateCode(rateHz: number): number {
  let best = 1;
  for (let code = 2; code < CODED_RATES.length; code++) {
    if (Math.abs(CODED_RATES[code] - rateHz) < Math.abs(CODED_RATES[best] - rateHz)) best = code;
  }
  return best;
}

/**
 * Bytes of a frame header (through its CRC-8) from its fixed fields and the coded number's first byte
 * (RFC 9639, 9.1.5–9.1.7), or null when the number's first byte is not a valid lead byte.
 */
export function frameHeaderBytes(frame: Uint8Array): number | null {
  if (frame.length < 5) return null;
  const first = frame[4];
  const numberBytes = first < 0x80 ? 1 : first < 0xc0 ? 0 : first < 0xe0 ? 2 : first < 0xf0 ? 3 : first < 0xf8 ? 4 : first < 0xfc ? 5 : first < 0xfe ? 6 : first === 0xfe ? 7 : 0;
  if (numberBytes === 0) return null;
  const blockCode = frame[2] >> 4;
  const rateCode = frame[2] & 0x0f;
  const blockBytes = blockCode === 6 ? 1 : blockCode === 7 ? 2 : 0;
  const rateBytes = rateCode === 12 ? 1 : rateCode === 13 || rateCode === 14 ? 2 : 0;
  return 4 + numberBytes + blockBytes + rateBytes + 1;
}

export interface ExplicitHeaders {
  /**
   * The frame (header through CRC-16, whose CRC-16 holds) itself when its header states rate and depth, else a
   * copy that states them, valid until the next call. A depth without a code (e.g. 23 bits) stays 0: such frames
   * are rewritten at a coded depth first (flacDepthWidening.ts).
   */
  explicit(frame: Uint8Array): Uint8Array;
}

export function createExplicitHeaders(stream: { sampleRateHz: number; bitsPerSample: number }): ExplicitHeaders {
  const rateCode = nearestRateCode(stream.sampleRateHz);
  const depthCode = DEPTH_CODE[stream.bitsPerSample] ?? 0;
  let out = new Uint8Array(0);
  return {
    explicit(frame) {
      const rateDeferred = (frame[2] & 0x0f) === 0;
      const depthDeferred = ((frame[3] >> 1) & 7) === 0 && depthCode !== 0;
      if (!rateDeferred && !depthDeferred) return frame;
      const headerBytes = frameHeaderBytes(frame);
      // Not a frame header this can read: handed on as it is, for the decoder to report.
      if (headerBytes === null || headerBytes + 2 > frame.length) return frame;
      if (out.length < frame.length) out = new Uint8Array(frame.length * 2);
      const o = out.subarray(0, frame.length);
      o.set(frame);
      if (rateDeferred) o[2] = (o[2] & 0xf0) | rateCode;
      if (depthDeferred) o[3] = (o[3] & 0xf1) | (depthCode << 1);
      o[headerBytes - 1] = crc8(o, 0, headerBytes - 1);
      const crc = crc16(o, 0, o.length - 2, 0);
      o[o.length - 2] = crc >> 8;
      o[o.length - 1] = crc & 0xff;
      return o;
    },
  };
}
