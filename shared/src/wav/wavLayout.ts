/**
 * Walks the RIFF / RF64 chunk list of a WAV, BWF or RF64 file through positioned reads and returns where the
 * audio is and how it is encoded. Never reads the data chunk, never trusts a size before checking it
 * against the file size, and turns every malformed header into a WavFormatError with a stable code.
 */
import type { Container, Encoding, FileMetadata } from "../types/report.ts";
import type { ByteSource } from "./byteSource.ts";
import { createHeaderReader } from "./byteSource.ts";
import { parseBextChunk, BEXT_FIXED_BYTES } from "./bextChunk.ts";
import { describeFourCC, decodeUtf8OrLatin1, isPrintableFourCC, readFourCC, readUint32 } from "./bytes.ts";
import { parseDs64Chunk, type Ds64Chunk } from "./ds64Chunk.ts";
import { WavFormatError } from "./errors.ts";
import { parseFmtChunk, type FmtChunk } from "./fmtChunk.ts";
import { parseListInfoChunk } from "./listInfoChunk.ts";

export interface WavChunkInfo {
  id: string;
  /** Offset of the chunk header in the file. */
  offset: number;
  /** Body size as claimed (64-bit from ds64 where the 32-bit field is 0xFFFFFFFF). */
  sizeBytes: number;
}

export interface WavLayout {
  container: Container;
  encoding: Encoding;
  /** The fmt tag as written: 0x0001 PCM, 0x0003 float, 0xFFFE extensible. */
  formatTag: number;
  sampleRateHz: number;
  /** Container bits per sample (8, 16, 24, 32, 64). */
  bitDepth: number;
  /** Significant bits per sample (from WAVE_FORMAT_EXTENSIBLE; else equals bitDepth). */
  validBits: number;
  channels: number;
  /** Bytes per frame (all channels). */
  blockAlign: number;
  /** File offset of the first sample byte. */
  dataOffset: number;
  /** Bytes of the data chunk present in the file (claimed size clamped to the file). */
  dataBytes: number;
  /** Data chunk size the header claims. */
  claimedDataBytes: number;
  /** Whole frames present: floor(dataBytes / blockAlign). */
  totalFrames: number;
  /** The data chunk is shorter in the file than its header claims. */
  isTruncated: boolean;
  /**
   * The data size was never written: it holds 0 with audio bytes after it, or RIFF's 0xFFFFFFFF placeholder
   * past the end of the file (a recorder that stopped before closing the file). The data then runs to the
   * end of the file.
   */
  isDataSizeUnwritten: boolean;
  /** dwChannelMask of WAVE_FORMAT_EXTENSIBLE, else null. */
  channelMask: number | null;
  fileSizeBytes: number;
  metadata: FileMetadata;
  /** The chunks walked, in file order (bounded by MAX_CHUNKS). */
  chunks: WavChunkInfo[];
  /** Bytes after the last well-formed chunk (garbage appended, or a chunk header cut short): 0 when none. */
  trailingBytes: number;
  /** Lowercase hex of the `MD5 ` chunk (MD5 of the data chunk's audio bytes), or null when there is none. */
  audioMd5: string | null;
}

/** The first read covers typical headers (fmt, bext with coding history, LIST, iXML) in one I/O. */
const HEAD_READ_BYTES = 64 * 1024;
/** A file with more chunks than this is damaged or hostile; the walk stops there. */
export const MAX_CHUNKS = 4096;
/** Bounds on metadata kept in memory and in reports. */
export const MAX_IXML_BYTES = 64 * 1024;
export const MAX_LIST_BYTES = 64 * 1024;
export const MAX_CODING_HISTORY_BYTES = 64 * 1024;
/** Only the fields Tidemark reads; the rest of a large fmt (extra codec data) is skipped. */
const FMT_READ_BYTES = 40;
/** RF64 (EBU Tech 3306) marks sizes kept in ds64 with 0xFFFFFFFF. */
const SIZE_IN_DS64 = 0xffffffff;
/**
 * The largest fmt body that can be real: an 18-byte WAVEFORMATEX plus a 16-bit cbSize of extra bytes. A file
 * ending inside a fmt chunk that claims no more is cut short; one claiming more has a lying size field.
 */
const MAX_REAL_FMT_BYTES = 18 + 0xffff;
/** A ds64 table with more entries than the walk visits chunks cannot describe this file. */
const MAX_REAL_DS64_BYTES = 28 + 12 * MAX_CHUNKS;

interface WalkState {
  fmt: FmtChunk | null;
  ds64: Ds64Chunk | null;
  data: { offset: number; claimedBytes: number; isSizeUnwritten: boolean } | null;
  hasBext: boolean;
  metadata: FileMetadata;
  info: Record<string, string>;
  chunks: WavChunkInfo[];
  trailingBytes: number;
  audioMd5: string | null;
}

/** Reads the header of a WAV/BWF/RF64 file. Throws WavFormatError (never a RangeError) on malformed input. */
export async function readWavLayout(source: ByteSource): Promise<WavLayout> {
  const fileSize = source.sizeBytes;
  if (!Number.isSafeInteger(fileSize) || fileSize < 0) {
    throw new WavFormatError("bad-chunk", `file size ${fileSize} is not a byte count`);
  }
  if (fileSize === 0) throw new WavFormatError("empty-file", "file is empty (0 bytes)");
  const reader = await createHeaderReader(source, HEAD_READ_BYTES);
  const riff = await reader.readAt(0, 12);
  const isRf64 = startsWith(riff, "RF64") || startsWith(riff, "BW64");
  if (riff.length < 4 || !(startsWith(riff, "RIFF") || isRf64)) {
    if (startsWith(riff, "RIFX")) {
      throw new WavFormatError("unsupported-container", 'big-endian "RIFX" files are not supported; "RIFF" expected');
    }
    if (riff.length < 4 && (isPrefixOf(riff, "RIFF") || isPrefixOf(riff, "RF64"))) {
      throw new WavFormatError("truncated", `file ends after ${fileSize} bytes, inside the RIFF header`);
    }
    throw new WavFormatError("not-riff", `not a RIFF file: starts with ${describeStart(riff)}; "RIFF" or "RF64" expected`);
  }
  if (riff.length < 12) {
    throw new WavFormatError("truncated", `file ends after ${fileSize} bytes, inside the RIFF header`);
  }
  if (readFourCC(riff, 8) !== "WAVE") {
    throw new WavFormatError("not-wave", `RIFF form type is ${describeFourCC(riff, 8)}; "WAVE" expected`);
  }

  const state: WalkState = {
    fmt: null,
    ds64: null,
    data: null,
    hasBext: false,
    metadata: {},
    info: {},
    chunks: [],
    trailingBytes: 0,
    audioMd5: null,
  };
  await walkChunks(reader, fileSize, isRf64, state);

  const among = state.chunks.length >= MAX_CHUNKS ? `in the first ${MAX_CHUNKS} chunks (the walk stops there)` : `among ${state.chunks.length} chunks`;
  if (!state.fmt) throw new WavFormatError("no-fmt-chunk", `no "fmt " chunk ${among}`);
  if (!state.data) throw new WavFormatError("no-data-chunk", `no "data" chunk ${among}`);
  if (Object.keys(state.info).length > 0) state.metadata.info = state.info;
  const fmt = state.fmt;
  const available = fileSize - state.data.offset;
  const dataBytes = state.data.isSizeUnwritten ? available : Math.min(state.data.claimedBytes, available);
  return {
    container: isRf64 ? "rf64" : state.hasBext ? "bwf" : "wav",
    encoding: fmt.encoding,
    formatTag: fmt.formatTag,
    sampleRateHz: fmt.sampleRateHz,
    bitDepth: fmt.bitDepth,
    validBits: fmt.validBits,
    channels: fmt.channels,
    blockAlign: fmt.blockAlign,
    dataOffset: state.data.offset,
    dataBytes,
    claimedDataBytes: state.data.claimedBytes,
    totalFrames: Math.floor(dataBytes / fmt.blockAlign),
    isTruncated: state.data.claimedBytes > available,
    isDataSizeUnwritten: state.data.isSizeUnwritten,
    channelMask: fmt.channelMask,
    fileSizeBytes: fileSize,
    metadata: state.metadata,
    chunks: state.chunks,
    trailingBytes: state.data.isSizeUnwritten || state.data.claimedBytes > available ? 0 : state.trailingBytes,
    audioMd5: state.audioMd5,
  };
}

async function walkChunks(reader: ByteSource, fileSize: number, isRf64: boolean, state: WalkState): Promise<void> {
  let at = 12;
  while (at + 8 <= fileSize && state.chunks.length < MAX_CHUNKS) {
    const header = await reader.readAt(at, 8);
    if (!isPrintableFourCC(header, 0)) {
      // Past the audio, trailing garbage is common (tools append padding); before it, the header is broken.
      if (state.data && state.fmt) {
        state.trailingBytes = fileSize - at;
        return;
      }
      throw new WavFormatError("bad-chunk", `unreadable chunk id ${describeFourCC(header, 0)} at byte ${at}`);
    }
    const id = readFourCC(header, 0);
    const sizeField = readUint32(header, 4);
    const bodyOffset = at + 8;
    if (isRf64 && state.chunks.length === 0 && id !== "ds64") {
      throw new WavFormatError("bad-ds64", `RF64 file's first chunk is "${id}"; "ds64" expected (EBU Tech 3306)`);
    }
    const size = isRf64 && sizeField === SIZE_IN_DS64 ? sizeFromDs64(id, state.ds64) : sizeField;
    state.chunks.push({ id, offset: at, sizeBytes: size });
    const remaining = fileSize - bodyOffset;

    if (id === "data") {
      const isSizeUnwritten = await isUnwrittenDataSize(reader, fileSize, bodyOffset, size, isRf64 ? null : sizeField);
      if (!state.data) state.data = { offset: bodyOffset, claimedBytes: size, isSizeUnwritten };
      // A truncated data chunk is measured on what is there; nothing can follow it, nor an unfinished one.
      if (size > remaining || isSizeUnwritten) return;
    } else if (size > remaining) {
      if (id === "fmt " && !state.fmt && size > MAX_REAL_FMT_BYTES) {
        throw new WavFormatError("bad-fmt-chunk", `fmt chunk claims ${size} bytes; only ${remaining} remain in the file`);
      }
      if (id === "ds64" && size > MAX_REAL_DS64_BYTES) {
        throw new WavFormatError("bad-ds64", `ds64 chunk claims ${size} bytes; only ${remaining} remain in the file`);
      }
      if (state.data && state.fmt) {
        state.trailingBytes = fileSize - at;
        return;
      }
      throw new WavFormatError(
        "truncated",
        `file ends inside the "${id}" chunk at byte ${at} (claims ${size} bytes, ${remaining} remain)`,
      );
    } else {
      await readChunkBody(reader, id, bodyOffset, size, state);
    }
    at = await nextChunkOffset(reader, fileSize, bodyOffset, size);
  }
  // A few bytes too short to be a chunk header after a complete file.
  if (at < fileSize && at + 8 > fileSize && state.fmt && state.data) state.trailingBytes = fileSize - at;
  // Stopped by the end of the file part-way into a chunk header, before the header was complete.
  if (at < fileSize && at + 8 > fileSize && !(state.fmt && state.data) && state.chunks.length < MAX_CHUNKS) {
    throw new WavFormatError("truncated", `file ends inside a chunk header at byte ${at} (${fileSize - at} of 8 bytes present)`);
  }
}

/**
 * A recorder that stops before closing the file never fills in the data size: it stays 0 (with audio after
 * it instead of a next chunk) or RIFF's 0xFFFFFFFF placeholder, larger than the file. `riffSizeField` is the
 * 32-bit field of a RIFF file, null in RF64 (where 0xFFFFFFFF means "see ds64").
 */
async function isUnwrittenDataSize(
  reader: ByteSource,
  fileSize: number,
  bodyOffset: number,
  size: number,
  riffSizeField: number | null,
): Promise<boolean> {
  const remaining = fileSize - bodyOffset;
  // An odd size can only be whole frames of 8-bit mono, so a data chunk of exactly 0xFFFFFFFF bytes is not real
  // unless the file holds exactly that (plus the pad byte).
  if (riffSizeField === SIZE_IN_DS64) return remaining !== size && remaining !== size + 1;
  if (size !== 0 || remaining <= 0) return false;
  // Too short to be a chunk header: the bytes after the header can only be (a little) audio.
  if (remaining < 8) return true;
  // An empty data chunk followed by a real chunk (LIST, fmt after data) is a valid, silent file.
  const next = await reader.readAt(bodyOffset, 8);
  return !(isPrintableFourCC(next, 0) && readUint32(next, 4) <= remaining - 8);
}

function sizeFromDs64(id: string, ds64: Ds64Chunk | null): number {
  if (!ds64) throw new WavFormatError("bad-ds64", `"${id}" defers its size to a ds64 chunk the file lacks`);
  if (id === "data") return ds64.dataSizeBytes;
  const size = ds64.chunkSizes.get(id);
  if (size === undefined) throw new WavFormatError("bad-ds64", `"${id}" defers its size to ds64, whose table has no entry for it`);
  return size;
}

async function readChunkBody(reader: ByteSource, id: string, offset: number, size: number, state: WalkState): Promise<void> {
  switch (id) {
    case "ds64":
      if (!state.ds64) state.ds64 = parseDs64Chunk(await reader.readAt(offset, Math.min(size, 4096)), size);
      return;
    case "fmt ":
      if (!state.fmt) state.fmt = parseFmtChunk(await reader.readAt(offset, Math.min(size, FMT_READ_BYTES)));
      return;
    case "bext": {
      if (state.hasBext) return;
      const bext = parseBextChunk(await reader.readAt(offset, Math.min(size, BEXT_FIXED_BYTES + MAX_CODING_HISTORY_BYTES)));
      if (bext) {
        state.metadata.bext = bext;
        state.hasBext = true;
      }
      return;
    }
    case "LIST":
      parseListInfoChunk(await reader.readAt(offset, Math.min(size, MAX_LIST_BYTES)), state.info);
      return;
    case "MD5 ": {
      // 16 bytes: the MD5 digest (RFC 1321) of the data chunk's audio bytes.
      if (state.audioMd5 !== null || size !== 16) return;
      const digest = await reader.readAt(offset, 16);
      state.audioMd5 = Array.from(digest, (b) => b.toString(16).padStart(2, "0")).join("");
      return;
    }
    case "iXML": {
      if (state.metadata.ixml !== undefined) return;
      const bytes = await reader.readAt(offset, Math.min(size, MAX_IXML_BYTES));
      let end = bytes.length;
      while (end > 0 && bytes[end - 1] === 0) end--;
      state.metadata.ixml = decodeUtf8OrLatin1(bytes.subarray(0, end));
      return;
    }
    default:
      return;
  }
}

/**
 * Chunks are word-aligned: an odd size is followed by a pad byte (RIFF specification). Some writers omit it;
 * when the padded position holds no chunk id but the unpadded one does, the unpadded one is taken.
 */
async function nextChunkOffset(reader: ByteSource, fileSize: number, bodyOffset: number, size: number): Promise<number> {
  const unpadded = bodyOffset + size;
  if ((size & 1) === 0) return unpadded;
  const padded = unpadded + 1;
  if (unpadded + 8 > fileSize) return padded;
  const probe = await reader.readAt(unpadded, 5);
  if (probe.length === 5 && !isPrintableFourCC(probe, 1) && isPrintableFourCC(probe, 0)) return unpadded;
  return padded;
}

function startsWith(bytes: Uint8Array, text: string): boolean {
  if (bytes.length < text.length) return false;
  for (let i = 0; i < text.length; i++) if (bytes[i] !== text.charCodeAt(i)) return false;
  return true;
}

function isPrefixOf(bytes: Uint8Array, text: string): boolean {
  for (let i = 0; i < bytes.length; i++) if (bytes[i] !== text.charCodeAt(i)) return false;
  return true;
}

function describeStart(bytes: Uint8Array): string {
  if (bytes.length >= 4) return describeFourCC(bytes, 0);
  return Array.from(bytes, (b) => b.toString(16).padStart(2, "0")).join(" ");
}
