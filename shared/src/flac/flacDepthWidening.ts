/**
 * Rewrites the frames of a FLAC stream whose depth is not 8, 16, 24 or 32 bits (e.g. 12- or 20-bit masters) so
 * they declare the next of those depths, C, and decode to the same samples shifted left by C − bps. The decoder
 * we use (libFLAC's WebAssembly build, @wasm-audio-decoders/flac 0.2.x) hands out only those four depths.
 *
 * How (RFC 9639, 9.2.2): a subframe header is a zero bit, a 6-bit type, a wasted-bits flag and, when set, the
 * wasted count k in unary (k − 1 zeros, a one). Its body is coded at (frame depth [+1 for a stereo side
 * channel] − k) bits, so raising the frame's depth and every k by the same C − bps leaves each body bit as it
 * was; the decoder then shifts every sample left by the new k. To move the bodies we must know where each one
 * ends, so each subframe is walked (CONSTANT, VERBATIM, FIXED, LPC and their Rice-coded residual, 9.2.3–9.2.7).
 * The header's sample-size code becomes C's (9.1.4) and its CRC-8 (9.1.8), and the frame's CRC-16 (9.3), are
 * recomputed. Pure: no I/O; one output buffer reused from frame to frame.
 */
import { crc16, crc8, parseFrameHeader } from "./flacFramer.ts";
import type { FlacStreamInfo } from "./flacLayout.ts";

/** The depth the decoder is given for a stream of `bps` bits: the next of 8, 16, 24, 32; null outside 4..32 (RFC 9639, 8.2). */
export function containerDepth(bps: number): number | null {
  if (!Number.isInteger(bps) || bps < 4 || bps > 32) return null;
  return bps <= 8 ? 8 : bps <= 16 ? 16 : bps <= 24 ? 24 : 32;
}

/** Sample-size codes of the frame header for the container depths (RFC 9639, 9.1.4). */
const SIZE_CODE: Record<number, number> = { 8: 1, 16: 4, 24: 6, 32: 7 };

/** Thrown inside the walk; widen() turns it into its message. */
class FrameShapeError extends Error {}

export interface FrameWidener {
  readonly container: number;
  /**
   * The frame (header through CRC-16, whose CRC-16 holds) rewritten at the container depth, valid until the
   * next call; or a string saying why it could not be (a subframe that does not parse, or bits left over or
   * missing at the frame's end: RFC 9639 puts only zero padding before the CRC-16).
   */
  widen(frame: Uint8Array): Uint8Array | string;
}

export function createFrameWidener(info: FlacStreamInfo): FrameWidener {
  const container = containerDepth(info.bitsPerSample);
  if (container === null) throw new Error(`FLAC depth ${info.bitsPerSample} bits: 4 to 32 expected (RFC 9639, 8.2)`);
  return new Widener(info, container);
}

class Widener implements FrameWidener {
  private out = new Uint8Array(0);
  /** Read position in bits, and the bit where the subframes must end (the CRC-16's first). */
  private pos = 0;
  private limit = 0;
  private src: Uint8Array = new Uint8Array(0);
  private wpos = 0;
  private readonly shift: number;

  constructor(
    private readonly info: FlacStreamInfo,
    readonly container: number,
  ) {
    this.shift = container - info.bitsPerSample;
  }

  widen(frame: Uint8Array): Uint8Array | string {
    const header = parseFrameHeader(frame, 0, frame.length, this.info);
    if (!header) return "the frame header does not parse for this stream";
    const channelCode = frame[3] >> 4;
    // Which channel, if any, is a side channel coded one bit wider (RFC 9639, 9.1.3 and 9.2).
    const side = channelCode === 8 || channelCode === 10 ? 1 : channelCode === 9 ? 0 : -1;
    const channels = this.info.channels;
    const need = frame.length + channels + 8;
    if (this.out.length < need) this.out = new Uint8Array(need * 2);
    const out = this.out;
    const hb = header.headerBytes;
    out.fill(0, 0, need);
    out.set(frame.subarray(0, hb - 1), 0);
    out[3] = (out[3] & 0xf1) | (SIZE_CODE[this.container] << 1);
    out[hb - 1] = crc8(out, 0, hb - 1);
    this.src = frame;
    this.pos = hb * 8;
    this.limit = (frame.length - 2) * 8;
    this.wpos = hb * 8;
    try {
      for (let c = 0; c < channels; c++) this.subframe(header.blockSize, this.info.bitsPerSample + (c === side ? 1 : 0), c);
    } catch (e) {
      if (e instanceof FrameShapeError) return e.message;
      throw e;
    }
    const endByte = (this.pos + 7) >> 3;
    if (endByte !== frame.length - 2) {
      return `the subframes end at byte ${endByte} of the ${frame.length}-byte frame; byte ${frame.length - 2} expected (RFC 9639, 9.3)`;
    }
    const o = (this.wpos + 7) >> 3;
    const crc = crc16(out, 0, o, 0);
    out[o] = crc >> 8;
    out[o + 1] = crc & 0xff;
    return out.subarray(0, o + 2);
  }

  private subframe(blockSize: number, bits: number, channel: number): void {
    const start = this.pos;
    if (this.read(1) !== 0) throw new FrameShapeError(`subframe ${channel}: padding bit 1; 0 expected (RFC 9639, 9.2.1)`);
    const type = this.read(6);
    const k = this.read(1) === 1 ? this.unary() + 1 : 0;
    const n = bits - k;
    if (n < 1) throw new FrameShapeError(`subframe ${channel}: ${k} wasted bits of ${bits}`);
    const body = this.pos;
    if (type === 0) this.skip(n);
    else if (type === 1) this.skip(n * blockSize);
    else if (type >= 8 && type <= 12) {
      const order = type - 8;
      this.skip(n * order);
      this.residual(blockSize, order, channel);
    } else if (type >= 32) {
      const order = type - 31;
      this.skip(n * order);
      const precision = this.read(4);
      if (precision === 15) throw new FrameShapeError(`subframe ${channel}: LPC coefficient precision code 15 is invalid (RFC 9639, 9.2.6)`);
      this.skip(5 + order * (precision + 1));
      this.residual(blockSize, order, channel);
    } else throw new FrameShapeError(`subframe ${channel}: reserved subframe type ${type} (RFC 9639, 9.2.2)`);
    if (this.pos > this.limit) throw new FrameShapeError(`subframe ${channel} runs past the frame's CRC-16 (starts at bit ${start})`);
    // The rewritten header: zero bit, type, wasted flag 1, k + shift in unary.
    this.write(type, 7);
    this.write(1, 1);
    this.wpos += k + this.shift - 1;
    this.write(1, 1);
    this.copy(body, this.pos);
  }

  /** Rice-coded residual (RFC 9639, 9.2.7): skipped, only its length matters. */
  private residual(blockSize: number, order: number, channel: number): void {
    const method = this.read(2);
    if (method > 1) throw new FrameShapeError(`subframe ${channel}: reserved residual coding method ${method} (RFC 9639, 9.2.7)`);
    const paramBits = method === 0 ? 4 : 5;
    const escape = method === 0 ? 15 : 31;
    const partitionOrder = this.read(4);
    const partitions = 1 << partitionOrder;
    const perPartition = blockSize >> partitionOrder;
    if (perPartition << partitionOrder !== blockSize || perPartition < order) {
      throw new FrameShapeError(`subframe ${channel}: partition order ${partitionOrder} does not fit ${blockSize} samples and predictor order ${order} (RFC 9639, 9.2.7)`);
    }
    const b = this.src;
    const limitByte = this.limit >> 3;
    for (let p = 0; p < partitions; p++) {
      const count = p === 0 ? perPartition - order : perPartition;
      const rice = this.read(paramBits);
      if (rice === escape) {
        this.skip(this.read(5) * count);
        continue;
      }
      // Each sample: a unary quotient (zeros then a one), then `rice` low bits.
      let pos = this.pos;
      for (let i = 0; i < count; i++) {
        for (;;) {
          const at = pos >> 3;
          if (at >= limitByte) throw new FrameShapeError(`subframe ${channel}: residual runs past the frame's CRC-16`);
          const off = pos & 7;
          const byte = (b[at] << off) & 0xff;
          if (byte === 0) {
            pos += 8 - off;
            continue;
          }
          pos += Math.clz32(byte) - 24 + 1;
          break;
        }
        pos += rice;
      }
      this.pos = pos;
    }
  }

  private read(n: number): number {
    if (this.pos + n > this.limit) throw new FrameShapeError(`the subframes run past the frame's CRC-16`);
    const b = this.src;
    let v = 0;
    let pos = this.pos;
    while (n > 0) {
      const off = pos & 7;
      const take = Math.min(8 - off, n);
      v = v * (1 << take) + ((b[pos >> 3] >> (8 - off - take)) & ((1 << take) - 1));
      pos += take;
      n -= take;
    }
    this.pos = pos;
    return v;
  }

  private skip(n: number): void {
    this.pos += n;
    if (this.pos > this.limit) throw new FrameShapeError(`the subframes run past the frame's CRC-16`);
  }

  private unary(): number {
    let zeros = 0;
    while (this.read(1) === 0) zeros++;
    return zeros;
  }

  /** Writes the low `n` (≤ 8) bits of v into the zeroed output. */
  private write(v: number, n: number): void {
    for (let i = n - 1; i >= 0; i--) {
      if ((v >> i) & 1) this.out[this.wpos >> 3] |= 0x80 >> (this.wpos & 7);
      this.wpos++;
    }
  }

  /** Copies source bits [from, to) to the write position: bit by bit to a byte boundary, then whole bytes. */
  private copy(from: number, to: number): void {
    const src = this.src;
    const out = this.out;
    let n = to - from;
    while (n > 0 && (this.wpos & 7) !== 0) {
      this.write((src[from >> 3] >> (7 - (from & 7))) & 1, 1);
      from++;
      n--;
    }
    const bytes = n >> 3;
    const i = from >> 3;
    const o = this.wpos >> 3;
    const sh = from & 7;
    if (sh === 0) out.set(src.subarray(i, i + bytes), o);
    else {
      // i + k + 1 stays inside the frame: the CRC-16's two bytes follow the last subframe.
      for (let k = 0; k < bytes; k++) out[o + k] = ((src[i + k] << sh) | (src[i + k + 1] >> (8 - sh))) & 0xff;
    }
    this.wpos += bytes * 8;
    from += bytes * 8;
    n -= bytes * 8;
    for (; n > 0; n--, from++) this.write((src[from >> 3] >> (7 - (from & 7))) & 1, 1);
  }
}
