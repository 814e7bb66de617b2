/**
 * Walks the chunks of an AIFF or AIFF-C file (Apple's Audio Interchange File Format 1.3 and its AIFF-C draft
 * of 1991) through positioned reads and returns the same layout the WAV walker does, so the same data-chunk
 * decoder and analysis run on it. Big-endian sizes; COMM says the format, SSND holds the samples; NAME, AUTH,
 * `(c) ` and ANNO become metadata text. Never trusts a size before checking it against the file size.
 */
import type { Encoding, FileMetadata } from "../types/report.ts";
import type { ByteSource } from "../wav/byteSource.ts";
import { createHeaderReader } from "../wav/byteSource.ts";
import { decodeTextField, describeFourCC, isPrintableFourCC, readFourCC } from "../wav/bytes.ts";
import { WavFormatError } from "../wav/errors.ts";
import { MAX_CHANNELS, MAX_SAMPLE_RATE_HZ, MIN_SAMPLE_RATE_HZ } from "../wav/fmtChunk.ts";
import { MAX_CHUNKS, type WavChunkInfo, type WavLayout } from "../wav/wavLayout.ts";

const HEAD_READ_BYTES = 64 * 1024;
/** Text chunks kept, and their size each. */
const MAX_TEXT_CHUNKS = 256;
const MAX_TEXT_BYTES = 64 * 1024;
const TEXT_CHUNKS: Record<string, string> = { NAME: "NAME", AUTH: "AUTH", "(c) ": "(c)", ANNO: "ANNO" };

export function readUint32BE(b: Uint8Array, at: number): number {
  return b[at] * 0x1000000 + ((b[at + 1] << 16) | (b[at + 2] << 8) | b[at + 3]);
}

function readUint16BE(b: Uint8Array, at: number): number {
  return (b[at] << 8) | b[at + 1];
}

/** 80-bit IEEE 754 extended precision (COMM sampleRate): sign, 15-bit exponent biased 16383, 64-bit mantissa. */
export function readExtended80(b: Uint8Array, at: number): number {
  const sign = b[at] & 0x80 ? -1 : 1;
  const exponent = ((b[at] & 0x7f) << 8) | b[at + 1];
  const mantissa = readUint32BE(b, at + 2) * 0x100000000 + readUint32BE(b, at + 6);
  if (exponent === 0 && mantissa === 0) return 0;
  if (exponent === 0x7fff) return NaN;
  return sign * mantissa * 2 ** (exponent - 16383 - 63);
}

interface SampleCoding {
  encoding: Encoding;
  bigEndian: boolean;
  /** Container bits, or null to take COMM's sampleSize rounded up to whole bytes. */
  bits: number | null;
}

/** AIFF-C compression types Tidemark decodes (case as registered; upper-case aliases are common). */
const CODINGS: Record<string, SampleCoding> = {
  NONE: { encoding: "pcm", bigEndian: true, bits: null },
  twos: { encoding: "pcm", bigEndian: true, bits: null },
  in24: { encoding: "pcm", bigEndian: true, bits: 24 },
  in32: { encoding: "pcm", bigEndian: true, bits: 32 },
  sowt: { encoding: "pcm", bigEndian: false, bits: null },
  fl32: { encoding: "float", bigEndian: true, bits: 32 },
  FL32: { encoding: "float", bigEndian: true, bits: 32 },
  fl64: { encoding: "float", bigEndian: true, bits: 64 },
  FL64: { encoding: "float", bigEndian: true, bits: 64 },
  alaw: { encoding: "alaw", bigEndian: true, bits: 8 },
  ALAW: { encoding: "alaw", bigEndian: true, bits: 8 },
  ulaw: { encoding: "mulaw", bigEndian: true, bits: 8 },
  ULAW: { encoding: "mulaw", bigEndian: true, bits: 8 },
};

interface Comm {
  channels: number;
  frames: number;
  sampleSize: number;
  sampleRateHz: number;
  coding: SampleCoding;
}

export interface AiffLayout extends WavLayout {
  bigEndian: boolean;
  /** AIFF 8-bit PCM is signed (unlike WAV's unsigned 8-bit). */
  signed8Bit: boolean;
}

export function isAiffHeader(head: Uint8Array): boolean {
  return head.length >= 4 && readFourCC(head, 0) === "FORM";
}

export async function readAiffLayout(source: ByteSource): Promise<AiffLayout> {
  const fileSize = source.sizeBytes;
  if (fileSize === 0) throw new WavFormatError("empty-file", "file is empty (0 bytes)");
  const reader = await createHeaderReader(source, HEAD_READ_BYTES);
  const form = await reader.readAt(0, 12);
  if (form.length < 12) throw new WavFormatError("truncated", `file ends after ${fileSize} bytes, inside the FORM header`);
  const formType = readFourCC(form, 8);
  if (formType !== "AIFF" && formType !== "AIFC") {
    throw new WavFormatError("not-wave", `FORM type is ${describeFourCC(form, 8)}; "AIFF" or "AIFC" expected`);
  }
  const isAifc = formType === "AIFC";
  const chunks: WavChunkInfo[] = [];
  const text: { key: string; value: string }[] = [];
  let comm: Comm | null = null;
  let ssnd: { dataOffset: number; claimedBytes: number } | null = null;
  let trailingBytes = 0;
  let at = 12;
  while (at + 8 <= fileSize && chunks.length < MAX_CHUNKS) {
    const header = await reader.readAt(at, 8);
    if (!isPrintableFourCC(header, 0)) {
      if (comm && ssnd) {
        trailingBytes = fileSize - at;
        break;
      }
      throw new WavFormatError("bad-chunk", `unreadable chunk id ${describeFourCC(header, 0)} at byte ${at}`);
    }
    const id = readFourCC(header, 0);
    const size = readUint32BE(header, 4);
    const bodyOffset = at + 8;
    const remaining = fileSize - bodyOffset;
    chunks.push({ id, offset: at, sizeBytes: size });
    if (id === "SSND") {
      if (size < 8 || remaining < 8) throw new WavFormatError("bad-chunk", `SSND chunk at byte ${at} is ${Math.min(size, remaining)} bytes; at least 8 expected`);
      const fields = await reader.readAt(bodyOffset, 8);
      const dataOffset = bodyOffset + 8 + readUint32BE(fields, 0);
      if (dataOffset > bodyOffset + size || dataOffset > fileSize) {
        throw new WavFormatError("bad-chunk", `SSND offset ${readUint32BE(fields, 0)} points past the end of its chunk`);
      }
      if (!ssnd) ssnd = { dataOffset, claimedBytes: bodyOffset + size - dataOffset };
      // A truncated sound chunk is measured on what is there; nothing can follow it.
      if (size > remaining) break;
    } else if (size > remaining) {
      if (comm && ssnd) {
        trailingBytes = fileSize - at;
        break;
      }
      throw new WavFormatError("truncated", `file ends inside the "${id}" chunk at byte ${at} (claims ${size} bytes, ${remaining} remain)`);
    } else if (id === "COMM") {
      if (!comm) comm = parseComm(await reader.readAt(bodyOffset, Math.min(size, 64)), size, isAifc);
    } else if (id in TEXT_CHUNKS && text.length < MAX_TEXT_CHUNKS) {
      const value = decodeTextField(await reader.readAt(bodyOffset, Math.min(size, MAX_TEXT_BYTES)));
      text.push({ key: TEXT_CHUNKS[id], value });
    }
    // Chunks are padded to an even length (AIFF 1.3, "Chunks").
    at = bodyOffset + size + (size & 1);
  }
  if (at < fileSize && at + 8 > fileSize && comm && ssnd && trailingBytes === 0) trailingBytes = fileSize - at;
  if (!comm) throw new WavFormatError("no-fmt-chunk", `no "COMM" chunk among ${chunks.length} chunks`);
  if (!ssnd) {
    if (comm.frames === 0) ssnd = { dataOffset: fileSize, claimedBytes: 0 };
    else throw new WavFormatError("no-data-chunk", `no "SSND" chunk among ${chunks.length} chunks`);
  }
  const bitDepth = comm.coding.bits ?? Math.ceil(comm.sampleSize / 8) * 8;
  const blockAlign = comm.channels * (bitDepth / 8);
  const available = Math.max(0, fileSize - ssnd.dataOffset);
  const dataBytes = Math.min(ssnd.claimedBytes, available);
  // COMM's frame count is the authority (SSND may carry padding); the bytes present bound it.
  const claimedFrames = comm.frames;
  const totalFrames = Math.min(claimedFrames, Math.floor(dataBytes / blockAlign));
  const metadata: FileMetadata = text.length > 0 ? { text } : {};
  return {
    container: isAifc ? "aifc" : "aiff",
    encoding: comm.coding.encoding,
    formatTag: 0,
    sampleRateHz: comm.sampleRateHz,
    bitDepth,
    validBits: comm.coding.encoding === "pcm" ? Math.min(comm.sampleSize, bitDepth) : bitDepth,
    channels: comm.channels,
    blockAlign,
    dataOffset: ssnd.dataOffset,
    dataBytes: totalFrames * blockAlign,
    claimedDataBytes: claimedFrames * blockAlign,
    totalFrames,
    isTruncated: totalFrames < claimedFrames,
    isDataSizeUnwritten: false,
    channelMask: null,
    fileSizeBytes: fileSize,
    metadata,
    chunks,
    trailingBytes,
    audioMd5: null,
    bigEndian: comm.coding.bigEndian,
    signed8Bit: true,
  };
}

function parseComm(body: Uint8Array, size: number, isAifc: boolean): Comm {
  const need = isAifc ? 22 : 18;
  if (size < need || body.length < need) {
    throw new WavFormatError("bad-fmt-chunk", `COMM chunk is ${Math.min(size, body.length)} bytes; at least ${need} expected`);
  }
  const channels = readUint16BE(body, 0);
  const frames = readUint32BE(body, 2);
  const sampleSize = readUint16BE(body, 6);
  const rate = readExtended80(body, 8);
  let coding: SampleCoding = CODINGS.NONE;
  if (isAifc) {
    const type = readFourCC(body, 18);
    const found = CODINGS[type];
    if (!found) {
      throw new WavFormatError(
        "unsupported-encoding",
        `AIFF-C compression type ${describeFourCC(body, 18)} is not supported; expected NONE, sowt, fl32, fl64, alaw or ulaw`,
      );
    }
    coding = found;
  }
  if (channels < 1 || channels > MAX_CHANNELS) {
    throw new WavFormatError("bad-channel-count", `${channels} channels; 1 to ${MAX_CHANNELS} supported`);
  }
  const sampleRateHz = Math.round(rate);
  if (!(sampleRateHz >= MIN_SAMPLE_RATE_HZ && sampleRateHz <= MAX_SAMPLE_RATE_HZ)) {
    throw new WavFormatError("bad-sample-rate", `sample rate ${rate} Hz; ${MIN_SAMPLE_RATE_HZ} to ${MAX_SAMPLE_RATE_HZ} Hz supported`);
  }
  if (coding.encoding === "pcm" && coding.bits === null && (sampleSize < 1 || sampleSize > 32)) {
    throw new WavFormatError("bad-bit-depth", `${sampleSize} bits per sample in PCM data; 1 to 32 expected`);
  }
  if (coding.encoding === "float" && sampleSize !== coding.bits && sampleSize !== 0) {
    throw new WavFormatError("bad-bit-depth", `${sampleSize} bits per sample in ${readFourCC(body, 18)} data; ${coding.bits} expected`);
  }
  return { channels, frames, sampleSize, sampleRateHz, coding };
}
