/**
 * Decodes a FLAC file's frames as its bytes stream past: shared/src/flac frames and checks them (CRC-8/CRC-16,
 * sample numbers), libFLAC (the @wasm-audio-decoders/flac WebAssembly build) decodes the whole frames, lost ones
 * become silence of their exact length with a `decode-error` finding, and the decoded integers feed an MD5
 * compared with STREAMINFO's at the end (RFC 9639, 8.2: MD5 of the samples, interleaved, little-endian, in
 * whole bytes), at every depth up to 32 bits. Blocks reach the consumer in order with a fixed frame count,
 * reusing their arrays.
 */
import { createHash, type Hash } from "node:crypto";
import type { AudioBlock } from "@tidemark/shared/types/analysis";
import type { Finding } from "@tidemark/shared/types/report";
import { createFlacFramer, type FlacFrameHeader, type FlacFramer } from "@tidemark/shared/flac/flacFramer";
import type { FlacLayout } from "@tidemark/shared/flac/flacLayout";
import { WavFormatError } from "@tidemark/shared/wav/errors";
import { containerDepth } from "@tidemark/shared/flac/flacDepthWidening";
import { createFlacRescale, type FlacRescale } from "@tidemark/shared/flac/flacRescale";
import { createLibflacFrames, type DecodedFrame, type LibflacFrames } from "./libflacFrames.ts";
import { withExplicitHeaders } from "./explicitHeaderFrames.ts";
import { wrapOddDepthFrames } from "./oddDepthFrames.ts";

const FRAMER_SLICE_BYTES = 256 * 1024;
/** At most this many decode-error findings per file; the last one says how many more. */
const MAX_DECODE_FINDINGS = 50;
/** Decoded bytes gathered before one MD5 update (fewer calls into OpenSSL). */
const MD5_BATCH_BYTES = 1 << 20;
/** Whether this host stores a 32-bit word's low byte first (the MD5 input's order): true on x86 and ARM. */
const LITTLE_ENDIAN = new Uint8Array(Uint32Array.of(1).buffer)[0] === 1;

export interface FlacStreamDecoder {
  push(bytes: Uint8Array, fileOffset: number): Promise<void>;
  finish(): Promise<void>;
  readonly framesDecoded: number;
  /** decode-error, flac-md5-*, truncated findings. */
  readonly findings: Finding[];
  readonly trailingBytes: number;
}

/**
 * Depths whose frames reach libFLAC as they are. libFLAC is never given STREAMINFO (explicitHeaderFrames.ts), so
 * each frame must state its depth, and a frame header can state few (RFC 9639, 9.1.4): other depths (4–32 bits)
 * go through oddDepthFrames.ts, which rewrites each frame at the next of these and shifts the codes back.
 */
const DECODABLE_BITS: ReadonlySet<number> = new Set([8, 16, 24, 32]);

export async function createFlacStreamDecoder(
  layout: FlacLayout,
  blockFrames: number,
  onBlock: (block: AudioBlock) => void,
): Promise<FlacStreamDecoder> {
  const bits = layout.streamInfo.bitsPerSample;
  if (containerDepth(bits) === null) {
    throw new WavFormatError("unsupported-encoding", `FLAC with ${bits}-bit samples is not decoded: 4 to 32 bits expected (RFC 9639, 8.2)`);
  }
  // Frames reach libFLAC stating their own rate and depth: it is never given STREAMINFO (explicitHeaderFrames.ts).
  const libflac = withExplicitHeaders(await createLibflacFrames(), layout.streamInfo, containerDepth(bits)!);
  const decoder = DECODABLE_BITS.has(bits) ? libflac : wrapOddDepthFrames(libflac, layout.streamInfo);
  return new FlacStream(layout, blockFrames, onBlock, decoder);
}

/**
 * Everything runs synchronously inside the framer's callbacks: a frame is copied once into libFLAC's heap,
 * decoded, and its codes scaled once from there into the current block (and, for the MD5, into little-endian
 * bytes). Memory per file: one block (blockFrames × channels float32), the framer's buffer (about two frames),
 * 1 MiB of MD5 input and libFLAC's heap, whatever the length.
 */
class FlacStream implements FlacStreamDecoder {
  framesDecoded = 0;
  findings: Finding[] = [];
  trailingBytes = 0;
  private readonly framer: FlacFramer;
  private readonly planar: Float32Array[];
  private filled = 0;
  private blockStart = 0;
  private readonly md5: Hash | null;
  private readonly md5Bytes: number;
  private readonly md5Buffer: Uint8Array;
  /** The same bytes as 32-bit words, for the stereo fast path. */
  private readonly md5Words: Uint32Array;
  private md5Filled = 0;
  private decodeErrors = 0;
  private afterGap = false;
  /** libFLAC must be restarted before the next frame (see restartLibflac). */
  private resync = false;
  private overran = false;
  private dataStarted = false;
  /** The reader's common scale: code / 2^(bits−1), so a FLAC and the WAV it came from give identical samples. */
  private readonly inverse: number;
  /** Stereo with its MD5 (16 or 24 bits, most archive masters): the SIMD kernel, whose memory holds the block and MD5 input. */
  private readonly kernel: FlacRescale | null;

  constructor(
    private readonly layout: FlacLayout,
    private readonly blockFrames: number,
    private readonly onBlock: (block: AudioBlock) => void,
    private readonly decoder: LibflacFrames,
  ) {
    const channels = layout.channels;
    this.framer = createFlacFramer(layout.streamInfo, layout.dataOffset, {
      frame: (bytes, header, _offset, tentative) => this.frame(bytes, header, tentative === true),
      gap: (sample, frames, _offset, why) => this.gap(sample, frames, why),
    });
    const bits = layout.streamInfo.bitsPerSample;
    this.md5 = layout.streamInfo.md5 !== null ? createHash("md5") : null;
    this.md5Bytes = Math.ceil(bits / 8);
    const stereoKernel = this.md5 !== null && channels === 2 && (this.md5Bytes === 2 || this.md5Bytes === 3) && LITTLE_ENDIAN;
    this.kernel = stereoKernel ? createFlacRescale({ frameCapacity: layout.streamInfo.maxBlockSize, blockFrames, md5Bytes: MD5_BATCH_BYTES }) : null;
    this.planar = this.kernel ? [this.kernel.left, this.kernel.right] : Array.from({ length: channels }, () => new Float32Array(blockFrames));
    this.md5Buffer = this.kernel ? this.kernel.md5 : new Uint8Array(this.md5 ? MD5_BATCH_BYTES : 0);
    this.md5Words = new Uint32Array(this.md5Buffer.buffer, this.md5Buffer.byteOffset, this.md5Buffer.length >> 2);
    this.inverse = 1 / 2 ** (bits - 1);
  }

  async push(bytes: Uint8Array, fileOffset: number): Promise<void> {
    const start = this.layout.dataOffset;
    if (fileOffset + bytes.length <= start) return;
    const from = Math.max(0, start - fileOffset);
    this.dataStarted = true;
    // In slices, so the framer's buffer stays near one frame's size instead of one read's.
    for (let at = from; at < bytes.length; at += FRAMER_SLICE_BYTES) {
      this.framer.push(bytes.subarray(at, Math.min(bytes.length, at + FRAMER_SLICE_BYTES)));
    }
  }

  async finish(): Promise<void> {
    if (this.dataStarted) this.trailingBytes = this.framer.finish().trailingBytes;
    this.flushBlock();
    this.flushMd5();
    this.decoder.free();
    this.closingFindings();
  }

  /** `tentative`: the framer's guess at the last frame's end; turned down, unreported, unless libFLAC decodes it whole. */
  private frame(bytes: Uint8Array, header: FlacFrameHeader, tentative: boolean): boolean {
    if (this.resync) this.restartLibflac();
    const decoded = this.decoder.decode(bytes);
    const samples = Math.min(decoded.samples, header.blockSize);
    const error = decoded.error;
    if (tentative && (samples < header.blockSize || (error !== null && !(this.afterGap && /MISSING_FRAME/.test(error))))) {
      this.resync = true;
      return false;
    }
    if (samples < header.blockSize) {
      const lost = header.blockSize - samples;
      this.decodeError(header.sampleNumber + samples, lost, `libFLAC decoded ${samples} of the frame's ${header.blockSize} samples${error ? ` (${error})` : ""}`);
    } else if (error !== null && !(this.afterGap && /MISSING_FRAME/.test(error))) {
      // After a gap libFLAC notices the frame numbers jump; that loss is already reported.
      this.decodeError(header.sampleNumber, 0, `libFLAC: ${error}`);
    }
    this.afterGap = false;
    // libFLAC may have kept part of a frame it could not decode and would misread the next one with it.
    if (samples < header.blockSize || error !== null) this.resync = true;
    const kept = this.room(samples);
    if (kept > 0) this.take(decoded, kept);
    // A frame libFLAC gave back short keeps its length, as silence, so later times stay right.
    if (samples < header.blockSize) this.silence(header.blockSize - samples);
    return true;
  }

  /**
   * The frame's codes onto the reader's common scale (code / 2^(bits−1)) in the current block, and, in the same
   * pass, interleaved little-endian in whole bytes as STREAMINFO's MD5 input. The first `frames` of each channel
   * are taken.
   */
  private take(decoded: DecodedFrame, frames: number): void {
    const rowBytes = this.planar.length * this.md5Bytes;
    const kernel = this.kernel && decoded.samples <= this.layout.streamInfo.maxBlockSize ? this.kernel : null;
    if (kernel) {
      // Into the kernel's memory once; libFLAC's heap is another module's.
      const [left, right] = decoded.offsets;
      kernel.input.set(decoded.codes.subarray(left, left + frames), 0);
      kernel.input.set(decoded.codes.subarray(right, right + frames), this.layout.streamInfo.maxBlockSize);
    }
    let at = 0;
    while (at < frames) {
      let n = Math.min(frames - at, this.blockFrames - this.filled);
      if (this.md5) {
        if (this.md5Buffer.length - this.md5Filled < rowBytes) this.flushMd5();
        n = Math.min(n, Math.floor((this.md5Buffer.length - this.md5Filled) / rowBytes));
      }
      if (kernel) this.rescaleKernel(kernel, at, n);
      else this.rescale(decoded, at, n);
      at += n;
      if (this.filled === this.blockFrames) this.flushBlock();
    }
  }

  private rescale(decoded: DecodedFrame, from: number, frames: number): void {
    const count = this.planar.length;
    const { codes, offsets } = decoded;
    const inverse = this.inverse;
    const to = this.filled;
    this.filled += frames;
    if (!this.md5) {
      for (let c = 0; c < count; c++) {
        const x = this.planar[c];
        for (let i = 0, s = offsets[c] + from; i < frames; i++, s++) x[to + i] = codes[s] * inverse;
      }
      return;
    }
    const width = this.md5Bytes;
    const rowBytes = count * width;
    const out = this.md5Buffer;
    const base = this.md5Filled;
    this.md5Filled += frames * rowBytes;
    if (count === 2 && (width === 2 || width === 3) && (base & 3) === 0 && LITTLE_ENDIAN) {
      this.rescaleStereo(codes, offsets[0] + from, offsets[1] + from, to, frames, base);
      return;
    }
    for (let c = 0; c < count; c++) {
      const x = this.planar[c];
      let j = base + c * width;
      for (let i = 0, s = offsets[c] + from; i < frames; i++, j += rowBytes, s++) {
        const v = codes[s];
        x[to + i] = v * inverse;
        out[j] = v;
        if (width > 1) out[j + 1] = v >> 8;
        if (width > 2) out[j + 2] = v >> 16;
        if (width > 3) out[j + 3] = v >> 24;
      }
    }
  }

  /**
   * Stereo, 16 or 24 bits (most archive masters) where WebAssembly SIMD is missing: frame by frame, and the MD5
   * bytes written a 32-bit word at a time (two 24-bit frames are three words, a 16-bit frame one) instead of byte
   * by byte. `base` is a multiple of 4; the words are little-endian, so this runs only on such hosts.
   */
  private rescaleStereo(codes: Int32Array, left: number, right: number, to: number, frames: number, base: number): void {
    const inverse = this.inverse;
    const l = this.planar[0];
    const r = this.planar[1];
    const words = this.md5Words;
    let w = base >> 2;
    let i = 0;
    if (this.md5Bytes === 2) {
      for (; i < frames; i++, w++) {
        const a = codes[left + i];
        const b = codes[right + i];
        l[to + i] = a * inverse;
        r[to + i] = b * inverse;
        words[w] = (a & 0xffff) | (b << 16);
      }
      return;
    }
    for (; i + 1 < frames; i += 2, w += 3) {
      const a0 = codes[left + i];
      const b0 = codes[right + i];
      const a1 = codes[left + i + 1];
      const b1 = codes[right + i + 1];
      l[to + i] = a0 * inverse;
      r[to + i] = b0 * inverse;
      l[to + i + 1] = a1 * inverse;
      r[to + i + 1] = b1 * inverse;
      words[w] = (a0 & 0xffffff) | (b0 << 24);
      words[w + 1] = ((b0 >> 8) & 0xffff) | (a1 << 16);
      words[w + 2] = ((a1 >> 16) & 0xff) | (b1 << 8);
    }
    if (i < frames) {
      // An odd last frame: its six bytes one by one.
      const out = this.md5Buffer;
      const j = w << 2;
      const a = codes[left + i];
      const b = codes[right + i];
      l[to + i] = a * inverse;
      r[to + i] = b * inverse;
      out[j] = a;
      out[j + 1] = a >> 8;
      out[j + 2] = a >> 16;
      out[j + 3] = b;
      out[j + 4] = b >> 8;
      out[j + 5] = b >> 16;
    }
  }

  /** rescaleStereo's work on the frame in the kernel's memory: four frames a step there, the last few here. */
  private rescaleKernel(kernel: FlacRescale, from: number, frames: number): void {
    const width = this.md5Bytes;
    const to = this.filled;
    const base = this.md5Filled;
    const rowBytes = 2 * width;
    this.filled += frames;
    this.md5Filled += frames * rowBytes;
    const n4 = frames & ~3;
    kernel.stereo(from, n4, to, base, width, this.inverse);
    const input = kernel.input;
    const capacity = this.layout.streamInfo.maxBlockSize;
    const out = this.md5Buffer;
    for (let c = 0; c < 2; c++) {
      const x = this.planar[c];
      for (let i = n4; i < frames; i++) {
        const v = input[c * capacity + from + i];
        x[to + i] = v * this.inverse;
        const j = base + i * rowBytes + c * width;
        out[j] = v;
        out[j + 1] = v >> 8;
        if (width === 3) out[j + 2] = v >> 16;
      }
    }
  }

  private flushMd5(): void {
    if (this.md5 && this.md5Filled > 0) this.md5.update(this.md5Buffer.subarray(0, this.md5Filled));
    this.md5Filled = 0;
  }

  /**
   * A fresh libFLAC decoder for the frame after a gap or a failed frame. Fed a frame whose number jumps, libFLAC
   * 1.4 reports MISSING_FRAME and (as we read it) writes the missing samples as well; the package keeps one output
   * pointer per call, and its module's heap is fixed at 16 MB. Measured 2026-12-05 on a 600 s 24-bit file with a
   * byte flipped every 97 003: without the restart the free heap fell ≈ 2 MB per 60 gaps until, after some 500
   * gaps, the scan spun forever inside the WebAssembly (or died out of bounds); with it the free heap stays flat
   * and the scan ends. A decoder that has seen no frame takes any frame as it comes, and keeps no bytes of a frame
   * it rejected to misread the next one with. It is never given STREAMINFO (explicitHeaderFrames.ts).
   */
  private restartLibflac(): void {
    this.resync = false;
    this.decoder.restart();
  }

  private gap(sample: number, frames: number, why: string): void {
    this.decodeError(sample, frames, why);
    this.resync = true;
    this.afterGap = true;
    this.silence(frames);
  }

  /** Silence keeps every later time right; the MD5 then disagrees, as it should for damaged audio. */
  private silence(frames: number): void {
    for (let left = this.room(frames); left > 0; ) {
      const n = Math.min(left, this.blockFrames - this.filled);
      for (const x of this.planar) x.fill(0, this.filled, this.filled + n);
      this.filled += n;
      left -= n;
      if (this.md5) {
        for (let bytes = n * this.planar.length * this.md5Bytes; bytes > 0; ) {
          if (this.md5Filled === this.md5Buffer.length) this.flushMd5();
          const k = Math.min(bytes, this.md5Buffer.length - this.md5Filled);
          this.md5Buffer.fill(0, this.md5Filled, this.md5Filled + k);
          this.md5Filled += k;
          bytes -= k;
        }
      }
      if (this.filled === this.blockFrames) this.flushBlock();
    }
  }

  private decodeError(sample: number, frames: number, why: string): void {
    this.decodeErrors++;
    if (this.decodeErrors > MAX_DECODE_FINDINGS) return;
    const rate = this.layout.sampleRateHz;
    const start = sample / rate;
    this.findings.push({
      code: "decode-error",
      severity: "fail",
      channel: null,
      startSeconds: start,
      endSeconds: (sample + frames) / rate,
      message:
        frames > 0
          ? `${why} at ${start.toFixed(3)} s: ${frames} sample frame(s) could not be decoded and were measured as silence`
          : `${why} at ${start.toFixed(3)} s`,
    });
  }

  /** How many of `all` new frames fit: the analysers were laid out for STREAMINFO's total; audio past it is reported, not measured. */
  private room(all: number): number {
    const frames = Math.max(0, Math.min(all, this.layout.totalFrames - this.blockStart - this.filled));
    if (all > frames && !this.overran) {
      this.overran = true;
      const at = this.layout.totalFrames / this.layout.sampleRateHz;
      this.findings.push({
        code: "decode-error",
        severity: "fail",
        channel: null,
        startSeconds: at,
        endSeconds: null,
        message: `the stream holds more than the ${this.layout.totalFrames} sample frames STREAMINFO announces; audio after ${at.toFixed(3)} s is not measured`,
      });
    }
    return frames;
  }

  private flushBlock(): void {
    if (this.filled === 0) return;
    const frames = this.filled;
    this.filled = 0;
    const startFrame = this.blockStart;
    this.blockStart += frames;
    this.framesDecoded += frames;
    this.onBlock({ channels: this.planar, frames, startFrame });
  }

  private closingFindings(): void {
    const rate = this.layout.sampleRateHz;
    const info = this.layout.streamInfo;
    if (this.decodeErrors > MAX_DECODE_FINDINGS) {
      const last = this.findings[this.findings.length - 1];
      last.message += ` (${this.decodeErrors - MAX_DECODE_FINDINGS} more decode errors not listed)`;
    }
    const decoded = this.framesDecoded;
    if (info.totalSamples > 0 && decoded < info.totalSamples) {
      findingsPush(this.findings, {
        code: "truncated",
        severity: "fail",
        channel: null,
        startSeconds: decoded / rate,
        endSeconds: info.totalSamples / rate,
        message: `STREAMINFO announces ${info.totalSamples} sample frames but the stream holds ${decoded}: ` +
          `${(decoded / rate).toFixed(3)} s of ${(info.totalSamples / rate).toFixed(3)} s present, measured on what is there`,
      });
    }
    if (info.md5 === null) {
      findingsPush(this.findings, {
        code: "flac-md5-unset",
        severity: "info",
        channel: null,
        startSeconds: null,
        endSeconds: null,
        message: "STREAMINFO holds no MD5 of the audio (the encoder did not compute one): the decoded audio cannot be checked against it",
      });
    } else if (this.md5) {
      const digest = this.md5.digest("hex");
      if (digest !== info.md5) {
        findingsPush(this.findings, {
          code: "flac-md5-mismatch",
          severity: "fail",
          channel: null,
          startSeconds: null,
          endSeconds: null,
          message: `MD5 of the decoded audio is ${digest}; STREAMINFO says ${info.md5}: the audio is not what was encoded`,
        });
      }
    }
  }
}

function findingsPush(findings: Finding[], f: Finding): void {
  findings.push(f);
}
