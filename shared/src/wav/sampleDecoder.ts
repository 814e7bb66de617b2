/**
 * Interleaved little-endian sample bytes → planar Float32 at full scale ±1.0: integers divided by
 * 2^(bits−1) of the container (WAVE_FORMAT_EXTENSIBLE left-justifies valid bits, so that is exact),
 * 8-bit unsigned re-centred on 128. Float NaN/±Inf (and float64 values beyond float32 range) become 0
 * and are counted. Hot loops index typed arrays directly; aligned 16/32-bit and float data are read
 * through typed-array views of the caller's bytes; 24-bit mono and stereo, four samples from three aligned
 * 32-bit words, other 24-bit layouts by byte assembly. Big-endian data (AIFF) is byte-swapped into a scratch
 * copy and then takes the same paths; G.711 A-law and µ-law bytes expand through 256-entry tables.
 */
import type { Encoding } from "../types/report.ts";

export interface SampleFormat {
  encoding: Encoding;
  /** Container bits per sample. */
  bitDepth: number;
  channels: number;
  /** Samples stored most significant byte first (AIFF, AIFF-C "NONE"/"fl32"/"fl64"). */
  bigEndian?: boolean;
  /** 8-bit samples are signed two's complement (AIFF) rather than unsigned around 128 (WAV). */
  signed8Bit?: boolean;
}

export interface SampleDecoder {
  /**
   * Decodes `frames` whole frames from `bytes[byteOffset…]` into `out[c][outOffset…]`.
   * `firstFrame` is the file frame index of the first one (used to locate non-finite samples).
   */
  decode(bytes: Uint8Array, byteOffset: number, frames: number, out: Float32Array[], outOffset: number, firstFrame: number): void;
  /** NaN/±Inf samples replaced by 0 so far. */
  readonly nonFiniteSamples: number;
  /** File frame index of the first and last replaced sample, or null. */
  readonly firstNonFiniteFrame: number | null;
  readonly lastNonFiniteFrame: number | null;
}

const IS_LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

export function createSampleDecoder(format: SampleFormat): SampleDecoder {
  const { encoding, bitDepth, channels } = format;
  const supported =
    encoding === "float" ? bitDepth === 32 || bitDepth === 64 : encoding === "pcm" ? [8, 16, 24, 32].includes(bitDepth) : bitDepth === 8;
  if (!supported || !Number.isInteger(channels) || channels < 1) {
    throw new Error(
      `cannot decode ${channels} channel(s) of ${bitDepth}-bit ${encoding}; expected PCM 8/16/24/32, float 32/64 or 8-bit A-law/µ-law`,
    );
  }
  return new InterleavedDecoder(encoding, bitDepth, channels, format.bigEndian === true, format.signed8Bit === true);
}

/**
 * ITU-T G.711 expansion to linear values on a 16-bit scale (A-law: 13-bit codes × 8, µ-law: 14-bit codes × 4),
 * per the Recommendation's decoding tables (section 4, tables 1a/2a): A-law bytes are stored with even bits
 * inverted (XOR 0x55), µ-law bytes with all bits inverted.
 */
function g711Table(law: "alaw" | "mulaw"): Float32Array {
  const table = new Float32Array(256);
  for (let code = 0; code < 256; code++) {
    let value: number;
    if (law === "alaw") {
      const a = code ^ 0x55;
      const segment = (a >> 4) & 7;
      let magnitude = (a & 0x0f) << 4;
      magnitude += segment === 0 ? 8 : 0x108;
      if (segment > 1) magnitude <<= segment - 1;
      value = a & 0x80 ? magnitude : -magnitude;
    } else {
      const u = ~code & 0xff;
      const magnitude = (((u & 0x0f) << 3) + 0x84) << ((u & 0x70) >> 4);
      value = u & 0x80 ? 0x84 - magnitude : magnitude - 0x84;
    }
    table[code] = value / 32768;
  }
  return table;
}

let alawTable: Float32Array | null = null;
let mulawTable: Float32Array | null = null;

class InterleavedDecoder implements SampleDecoder {
  nonFiniteSamples = 0;
  firstNonFiniteFrame: number | null = null;
  lastNonFiniteFrame: number | null = null;
  private readonly bytesPerSample: number;
  private readonly blockAlign: number;
  /** Aligned copy for float data that sits at an odd address in the caller's buffer. */
  private scratch = new Uint8Array(0);

  private readonly g711: Float32Array | null;

  constructor(
    private readonly encoding: Encoding,
    private readonly bitDepth: number,
    private readonly channels: number,
    private readonly bigEndian: boolean,
    private readonly signed8Bit: boolean,
  ) {
    this.bytesPerSample = bitDepth / 8;
    this.blockAlign = this.bytesPerSample * channels;
    if (encoding === "alaw") this.g711 = alawTable ??= g711Table("alaw");
    else if (encoding === "mulaw") this.g711 = mulawTable ??= g711Table("mulaw");
    else this.g711 = null;
  }

  decode(bytes: Uint8Array, byteOffset: number, frames: number, out: Float32Array[], outOffset: number, firstFrame: number): void {
    if (frames <= 0) return;
    const byteLength = frames * this.blockAlign;
    if (byteOffset < 0 || byteOffset + byteLength > bytes.length) {
      throw new Error(`decode needs ${byteLength} bytes at ${byteOffset}; the buffer holds ${bytes.length}`);
    }
    if (this.g711) {
      decodeTable(this.g711, bytes, byteOffset, frames, this.channels, out, outOffset);
      return;
    }
    if (this.encoding === "float") {
      this.decodeFloat(bytes, byteOffset, frames, out, outOffset, firstFrame);
      return;
    }
    if (this.bigEndian || (this.bitDepth === 8 && this.signed8Bit)) {
      // Swap (and re-centre signed 8-bit) in an aligned copy, then decode it as little-endian unsigned-8 WAV data.
      const copy = this.scratchCopy(bytes, byteOffset, byteLength);
      if (this.bitDepth === 8) {
        if (this.signed8Bit) for (let i = 0; i < byteLength; i++) copy[i] ^= 0x80;
      } else swapBytes(copy, byteLength, this.bytesPerSample);
      bytes = copy;
      byteOffset = 0;
    }
    const address = bytes.byteOffset + byteOffset;
    switch (this.bitDepth) {
      case 8:
        decodeUint8(bytes, byteOffset, frames, this.channels, out, outOffset);
        return;
      case 16:
        if (IS_LITTLE_ENDIAN && (address & 1) === 0) {
          decodeInt16View(new Int16Array(bytes.buffer, address, frames * this.channels), frames, this.channels, out, outOffset);
        } else decodeInt16Bytes(bytes, byteOffset, frames, this.channels, out, outOffset);
        return;
      case 24:
        if (IS_LITTLE_ENDIAN && this.channels <= 2) decodeInt24Words(bytes, byteOffset, frames, this.channels, out, outOffset);
        else decodeInt24Bytes(bytes, byteOffset, frames, this.channels, out, outOffset);
        return;
      default:
        if (IS_LITTLE_ENDIAN && (address & 3) === 0) {
          decodeInt32View(new Int32Array(bytes.buffer, address, frames * this.channels), frames, this.channels, out, outOffset);
        } else decodeInt32Bytes(bytes, byteOffset, frames, this.channels, out, outOffset);
    }
  }

  private decodeFloat(bytes: Uint8Array, byteOffset: number, frames: number, out: Float32Array[], outOffset: number, firstFrame: number): void {
    const byteLength = frames * this.blockAlign;
    const align = this.bytesPerSample;
    let source = bytes;
    let offset = byteOffset;
    if (this.bigEndian === IS_LITTLE_ENDIAN) {
      source = this.scratchCopy(bytes, byteOffset, byteLength);
      swapBytes(source, byteLength, align);
      offset = 0;
    } else if ((bytes.byteOffset + byteOffset) % align !== 0) {
      source = this.scratchCopy(bytes, byteOffset, byteLength);
      offset = 0;
    }
    const count = frames * this.channels;
    const address = source.byteOffset + offset;
    const replaced =
      align === 4
        ? decodeFloatView(new Float32Array(source.buffer, address, count), frames, this.channels, out, outOffset)
        : decodeFloatView(new Float64Array(source.buffer, address, count), frames, this.channels, out, outOffset);
    if (replaced > 0) this.recordNonFinite(out, outOffset, frames, firstFrame, replaced);
  }

  /** Rare path: finds where the replaced samples were (they were written as NaN markers, then zeroed). */
  private recordNonFinite(out: Float32Array[], outOffset: number, frames: number, firstFrame: number, replaced: number): void {
    this.nonFiniteSamples += replaced;
    for (let i = 0; i < frames; i++) {
      let hit = false;
      for (let c = 0; c < this.channels; c++) {
        const x = out[c][outOffset + i];
        if (x - x !== 0) {
          out[c][outOffset + i] = 0;
          hit = true;
        }
      }
      if (hit) {
        if (this.firstNonFiniteFrame === null) this.firstNonFiniteFrame = firstFrame + i;
        this.lastNonFiniteFrame = firstFrame + i;
      }
    }
  }

  private scratchCopy(bytes: Uint8Array, byteOffset: number, byteLength: number): Uint8Array {
    if (this.scratch.length < byteLength) this.scratch = new Uint8Array(byteLength);
    this.scratch.set(bytes.subarray(byteOffset, byteOffset + byteLength));
    return this.scratch;
  }
}

const SCALE_8 = 1 / 128;
const SCALE_16 = 1 / 32768;
const SCALE_24 = 1 / 8388608;
const SCALE_32 = 1 / 2147483648;

function decodeTable(table: Float32Array, b: Uint8Array, at: number, frames: number, channels: number, out: Float32Array[], o: number): void {
  for (let c = 0; c < channels; c++) {
    const dst = out[c];
    let j = at + c;
    for (let i = 0; i < frames; i++, j += channels) dst[o + i] = table[b[j]];
  }
}

function decodeUint8(b: Uint8Array, at: number, frames: number, channels: number, out: Float32Array[], o: number): void {
  for (let c = 0; c < channels; c++) {
    const dst = out[c];
    let j = at + c;
    for (let i = 0; i < frames; i++, j += channels) dst[o + i] = (b[j] - 128) * SCALE_8;
  }
}

function decodeInt16View(v: Int16Array, frames: number, channels: number, out: Float32Array[], o: number): void {
  if (channels === 1) {
    const dst = out[0];
    for (let i = 0; i < frames; i++) dst[o + i] = v[i] * SCALE_16;
    return;
  }
  if (channels === 2) {
    const l = out[0];
    const r = out[1];
    for (let i = 0, k = 0; i < frames; i++, k += 2) {
      l[o + i] = v[k] * SCALE_16;
      r[o + i] = v[k + 1] * SCALE_16;
    }
    return;
  }
  for (let c = 0; c < channels; c++) {
    const dst = out[c];
    for (let i = 0, k = c; i < frames; i++, k += channels) dst[o + i] = v[k] * SCALE_16;
  }
}

function decodeInt16Bytes(b: Uint8Array, at: number, frames: number, channels: number, out: Float32Array[], o: number): void {
  const stride = 2 * channels;
  for (let c = 0; c < channels; c++) {
    const dst = out[c];
    let j = at + 2 * c;
    for (let i = 0; i < frames; i++, j += stride) dst[o + i] = (((b[j] | (b[j + 1] << 8)) << 16) >> 16) * SCALE_16;
  }
}

function decodeInt24Bytes(b: Uint8Array, at: number, frames: number, channels: number, out: Float32Array[], o: number): void {
  const stride = 3 * channels;
  if (channels === 2) {
    const l = out[0];
    const r = out[1];
    let j = at;
    for (let i = 0; i < frames; i++, j += 6) {
      l[o + i] = (((b[j] | (b[j + 1] << 8) | (b[j + 2] << 16)) << 8) >> 8) * SCALE_24;
      r[o + i] = (((b[j + 3] | (b[j + 4] << 8) | (b[j + 5] << 16)) << 8) >> 8) * SCALE_24;
    }
    return;
  }
  for (let c = 0; c < channels; c++) {
    const dst = out[c];
    let j = at + 3 * c;
    for (let i = 0; i < frames; i++, j += stride) {
      dst[o + i] = (((b[j] | (b[j + 1] << 8) | (b[j + 2] << 16)) << 8) >> 8) * SCALE_24;
    }
  }
}

/**
 * Mono or stereo 24-bit: 12 bytes (4 samples) from 3 aligned little-endian words w0 w1 w2, i.e. samples
 * w0[0:24], w0[24:32]|w1[0:16], w1[16:32]|w2[0:8], w2[8:32]: 3 loads instead of 12. Frames before the
 * first aligned word and after the last whole group go through the byte path. Values are the same.
 */
function decodeInt24Words(b: Uint8Array, at: number, frames: number, channels: number, out: Float32Array[], o: number): void {
  const address = b.byteOffset + at;
  // A group is 4 samples: 4 mono frames or 2 stereo frames. Stereo frames are 6 bytes, so an address ≡ 2 (mod 4)
  // becomes aligned after one frame; mono needs up to 3. Odd addresses never align.
  const framesPerGroup = 4 / channels;
  let lead = 0;
  while (lead < frames && (address + lead * 3 * channels) % 4 !== 0 && lead < framesPerGroup) lead++;
  if ((address + lead * 3 * channels) % 4 !== 0) {
    decodeInt24Bytes(b, at, frames, channels, out, o);
    return;
  }
  if (lead > 0) decodeInt24Bytes(b, at, Math.min(lead, frames), channels, out, o);
  const groups = Math.floor((frames - lead) / framesPerGroup);
  if (groups > 0) {
    const w = new Int32Array(b.buffer, address + lead * 3 * channels, groups * 3);
    const first = o + lead;
    if (channels === 2) {
      const l = out[0];
      const r = out[1];
      for (let g = 0, k = 0, i = first; g < groups; g++, k += 3, i += 2) {
        const w0 = w[k];
        const w1 = w[k + 1];
        const w2 = w[k + 2];
        l[i] = ((w0 << 8) >> 8) * SCALE_24;
        r[i] = (((w1 << 16) >> 8) | (w0 >>> 24)) * SCALE_24;
        l[i + 1] = (((w2 << 24) >> 8) | (w1 >>> 16)) * SCALE_24;
        r[i + 1] = (w2 >> 8) * SCALE_24;
      }
    } else {
      const m = out[0];
      for (let g = 0, k = 0, i = first; g < groups; g++, k += 3, i += 4) {
        const w0 = w[k];
        const w1 = w[k + 1];
        const w2 = w[k + 2];
        m[i] = ((w0 << 8) >> 8) * SCALE_24;
        m[i + 1] = (((w1 << 16) >> 8) | (w0 >>> 24)) * SCALE_24;
        m[i + 2] = (((w2 << 24) >> 8) | (w1 >>> 16)) * SCALE_24;
        m[i + 3] = (w2 >> 8) * SCALE_24;
      }
    }
  }
  const done = lead + groups * framesPerGroup;
  if (done < frames) decodeInt24Bytes(b, at + done * 3 * channels, frames - done, channels, out, o + done);
}

function decodeInt32View(v: Int32Array, frames: number, channels: number, out: Float32Array[], o: number): void {
  for (let c = 0; c < channels; c++) {
    const dst = out[c];
    for (let i = 0, k = c; i < frames; i++, k += channels) dst[o + i] = v[k] * SCALE_32;
  }
}

function decodeInt32Bytes(b: Uint8Array, at: number, frames: number, channels: number, out: Float32Array[], o: number): void {
  const stride = 4 * channels;
  for (let c = 0; c < channels; c++) {
    const dst = out[c];
    let j = at + 4 * c;
    for (let i = 0; i < frames; i++, j += stride) {
      dst[o + i] = (b[j] | (b[j + 1] << 8) | (b[j + 2] << 16) | (b[j + 3] << 24)) * SCALE_32;
    }
  }
}

/** Copies float samples; returns how many were non-finite (left as NaN for the caller to locate and zero). */
function decodeFloatView(v: Float32Array | Float64Array, frames: number, channels: number, out: Float32Array[], o: number): number {
  let bad = 0;
  for (let c = 0; c < channels; c++) {
    const dst = out[c];
    for (let i = 0, k = c; i < frames; i++, k += channels) {
      dst[o + i] = v[k];
      const y = dst[o + i];
      // y − y is 0 for every finite value and NaN for NaN/±Inf (also catches float64 overflowing float32).
      if (y - y !== 0) {
        dst[o + i] = NaN;
        bad++;
      }
    }
  }
  return bad;
}

function swapBytes(b: Uint8Array, length: number, width: number): void {
  for (let i = 0; i < length; i += width) {
    for (let lo = i, hi = i + width - 1; lo < hi; lo++, hi--) {
      const t = b[lo];
      b[lo] = b[hi];
      b[hi] = t;
    }
  }
}
