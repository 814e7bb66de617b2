/**
 * The metadata of a native FLAC stream (RFC 9639, sections 8.1–8.6): the "fLaC" marker (after an ID3v2 tag some
 * taggers prepend), STREAMINFO (rate, channels, bits, total samples, MD5 of the audio) and Vorbis comments.
 * Returned as the same layout the WAV walker gives, with the first frame's offset as `dataOffset`.
 */
import type { FileMetadata } from "../types/report.ts";
import type { ByteSource } from "../wav/byteSource.ts";
import { createHeaderReader } from "../wav/byteSource.ts";
import { decodeUtf8OrLatin1 } from "../wav/bytes.ts";
import { WavFormatError } from "../wav/errors.ts";
import { MAX_CHANNELS, MAX_SAMPLE_RATE_HZ, MIN_SAMPLE_RATE_HZ } from "../wav/fmtChunk.ts";
import type { WavChunkInfo, WavLayout } from "../wav/wavLayout.ts";
import { parseFrameHeader } from "./flacFramer.ts";

export interface FlacStreamInfo {
  minBlockSize: number;
  maxBlockSize: number;
  /** Smallest and largest frame in bytes as the encoder wrote them; 0 when it did not know. */
  minFrameSize: number;
  maxFrameSize: number;
  sampleRateHz: number;
  channels: number;
  /** Bits per sample as coded, 4–32. */
  bitsPerSample: number;
  /** 0 when the encoder did not know it. */
  totalSamples: number;
  /** Lowercase hex MD5 of the unencoded audio, or null when all zero (not computed by the encoder). */
  md5: string | null;
}

export interface FlacLayout extends WavLayout {
  streamInfo: FlacStreamInfo;
}

const HEAD_READ_BYTES = 64 * 1024;
const MAX_METADATA_BLOCKS = 1024;
const MAX_COMMENT_BYTES = 64 * 1024;
const MAX_COMMENTS = 1024;

const startsWithAscii = (b: Uint8Array, at: number, text: string): boolean => {
  if (b.length < at + text.length) return false;
  for (let i = 0; i < text.length; i++) if (b[at + i] !== text.charCodeAt(i)) return false;
  return true;
};

/** Where the FLAC stream starts: 0, or just past an ID3v2 tag (its size is a 28-bit "syncsafe" integer). */
export function flacStartOffset(head: Uint8Array): number | null {
  if (startsWithAscii(head, 0, "fLaC")) return 0;
  if (startsWithAscii(head, 0, "ID3") && head.length >= 10) {
    const size = ((head[6] & 0x7f) << 21) | ((head[7] & 0x7f) << 14) | ((head[8] & 0x7f) << 7) | (head[9] & 0x7f);
    const footer = head[5] & 0x10 ? 10 : 0;
    return 10 + size + footer;
  }
  return null;
}

export function isFlacHeader(head: Uint8Array): boolean {
  const start = flacStartOffset(head);
  if (start === null) return false;
  return start === 0 || (start + 4 <= head.length && startsWithAscii(head, start, "fLaC")) || start + 4 > head.length;
}

export function parseStreamInfo(b: Uint8Array): FlacStreamInfo {
  if (b.length < 34) throw new WavFormatError("bad-fmt-chunk", `STREAMINFO is ${b.length} bytes; 34 expected (RFC 9639, 8.2)`);
  const minBlockSize = (b[0] << 8) | b[1];
  const maxBlockSize = (b[2] << 8) | b[3];
  const minFrameSize = (b[4] << 16) | (b[5] << 8) | b[6];
  const maxFrameSize = (b[7] << 16) | (b[8] << 8) | b[9];
  const sampleRateHz = (b[10] << 12) | (b[11] << 4) | (b[12] >> 4);
  const channels = ((b[12] >> 1) & 7) + 1;
  const bitsPerSample = (((b[12] & 1) << 4) | (b[13] >> 4)) + 1;
  const totalSamples = (b[13] & 0x0f) * 0x100000000 + (b[14] * 0x1000000 + ((b[15] << 16) | (b[16] << 8) | b[17]));
  let md5: string | null = "";
  for (let i = 18; i < 34; i++) md5 += b[i].toString(16).padStart(2, "0");
  if (/^0+$/.test(md5)) md5 = null;
  return { minBlockSize, maxBlockSize, minFrameSize, maxFrameSize, sampleRateHz, channels, bitsPerSample, totalSamples, md5 };
}

function validate(info: FlacStreamInfo): void {
  if (info.channels > MAX_CHANNELS) throw new WavFormatError("bad-channel-count", `${info.channels} channels; 1 to ${MAX_CHANNELS} supported`);
  if (info.sampleRateHz < MIN_SAMPLE_RATE_HZ || info.sampleRateHz > MAX_SAMPLE_RATE_HZ) {
    throw new WavFormatError(
      "bad-sample-rate",
      `sample rate ${info.sampleRateHz} Hz; ${MIN_SAMPLE_RATE_HZ} to ${MAX_SAMPLE_RATE_HZ} Hz supported`,
    );
  }
  if (info.bitsPerSample < 4) {
    throw new WavFormatError("bad-bit-depth", `${info.bitsPerSample} bits per sample; 4 to 32 supported (RFC 9639, 8.2)`);
  }
  if (info.minBlockSize < 16 || info.maxBlockSize < info.minBlockSize) {
    throw new WavFormatError("bad-fmt-chunk", `STREAMINFO block sizes ${info.minBlockSize}–${info.maxBlockSize}; 16 ≤ min ≤ max expected`);
  }
}

/** Vorbis comment block (RFC 9639, 8.6): little-endian lengths, "FIELD=value" UTF-8 strings. */
function parseVorbisComments(b: Uint8Array, out: { key: string; value: string }[]): void {
  const u32 = (at: number): number => (b[at] | (b[at + 1] << 8) | (b[at + 2] << 16)) + b[at + 3] * 0x1000000;
  if (b.length < 8) return;
  let at = 4 + u32(0);
  if (at + 4 > b.length) return;
  const count = u32(at);
  at += 4;
  for (let i = 0; i < count && out.length < MAX_COMMENTS && at + 4 <= b.length; i++) {
    const length = u32(at);
    at += 4;
    if (at + length > b.length) return;
    const entry = decodeUtf8OrLatin1(b.subarray(at, at + length));
    at += length;
    const eq = entry.indexOf("=");
    if (eq > 0) out.push({ key: entry.slice(0, eq).toUpperCase(), value: entry.slice(eq + 1) });
  }
}

/**
 * Speaker positions as a WAVE_FORMAT_EXTENSIBLE mask, so loudness weights and the LFE follow the same rules as
 * for WAV (shared/src/analysis/loudness.ts, speakers.ts): the WAVEFORMATEXTENSIBLE_CHANNEL_MASK Vorbis comment
 * when the encoder kept the source's mask (Debian's flac writes it from a WAV), else the channel order RFC 9639
 * (9.1.3) fixes for 3 to 8 channels: L R C; FL FR BL BR; FL FR FC BL BR; FL FR FC LFE BL BR; FL FR FC LFE BC
 * SL SR; FL FR FC LFE BL BR SL SR. Speaker bits FL 0x1, FR 0x2, FC 0x4, LFE 0x8, BL 0x10, BR 0x20, BC 0x100,
 * SL 0x200, SR 0x400 (Microsoft's KSAUDIO_SPEAKER definitions, from memory).
 */
const RFC9639_MASKS: Record<number, number> = { 3: 0x7, 4: 0x33, 5: 0x37, 6: 0x3f, 7: 0x70f, 8: 0x63f };

function flacChannelMask(channels: number, comments: { key: string; value: string }[]): number | null {
  const tag = comments.find((c) => c.key === "WAVEFORMATEXTENSIBLE_CHANNEL_MASK")?.value.trim();
  if (tag && /^(0x[0-9a-f]{1,8}|[0-9]{1,10})$/i.test(tag)) {
    const mask = Number(tag);
    if (mask > 0 && mask <= 0xffffffff) return mask;
  }
  return RFC9639_MASKS[channels] ?? null;
}

/** Tail bytes searched for the last frame header when STREAMINFO does not give the total. */
const TAIL_SEARCH_BYTES = 4 * 1024 * 1024;

async function samplesFromLastFrame(reader: ByteSource, dataOffset: number, fileSize: number, info: FlacStreamInfo): Promise<number> {
  const from = Math.max(dataOffset, fileSize - TAIL_SEARCH_BYTES);
  const tail = await reader.readAt(from, fileSize - from);
  for (let i = tail.length - 2; i >= 0; i--) {
    if (tail[i] !== 0xff || (tail[i + 1] & 0xfe) !== 0xf8) continue;
    const header = parseFrameHeader(tail, i, tail.length, info);
    if (header) return header.sampleNumber + header.blockSize;
  }
  return 0;
}

export async function readFlacLayout(source: ByteSource): Promise<FlacLayout> {
  const fileSize = source.sizeBytes;
  if (fileSize === 0) throw new WavFormatError("empty-file", "file is empty (0 bytes)");
  const reader = await createHeaderReader(source, HEAD_READ_BYTES);
  const head = await reader.readAt(0, 16);
  const start = flacStartOffset(head);
  if (start === null) throw new WavFormatError("not-riff", 'not a FLAC stream: "fLaC" expected');
  const marker = await reader.readAt(start, 4);
  if (!startsWithAscii(marker, 0, "fLaC")) {
    if (marker.length < 4) throw new WavFormatError("truncated", `file ends after ${fileSize} bytes, before the "fLaC" marker`);
    throw new WavFormatError("not-riff", `no "fLaC" marker after the ID3v2 tag at byte ${start}`);
  }
  let at = start + 4;
  let streamInfo: FlacStreamInfo | null = null;
  let streamInfoBytes: Uint8Array | null = null;
  const comments: { key: string; value: string }[] = [];
  const chunks: WavChunkInfo[] = [];
  let isLast = false;
  while (!isLast) {
    if (chunks.length >= MAX_METADATA_BLOCKS) throw new WavFormatError("bad-chunk", `more than ${MAX_METADATA_BLOCKS} metadata blocks`);
    const header = await reader.readAt(at, 4);
    if (header.length < 4) throw new WavFormatError("truncated", `file ends inside the metadata block header at byte ${at}`);
    isLast = (header[0] & 0x80) !== 0;
    const type = header[0] & 0x7f;
    const length = (header[1] << 16) | (header[2] << 8) | header[3];
    const body = at + 4;
    if (body + length > fileSize) {
      throw new WavFormatError("truncated", `file ends inside metadata block ${chunks.length} at byte ${at} (claims ${length} bytes, ${fileSize - body} remain)`);
    }
    chunks.push({ id: `metadata-${type}`, offset: at, sizeBytes: length });
    if (type === 0 && !streamInfo) {
      if (chunks.length !== 1) throw new WavFormatError("bad-fmt-chunk", "STREAMINFO is not the first metadata block (RFC 9639, 8.1)");
      streamInfoBytes = await reader.readAt(body, Math.min(length, 34));
      streamInfo = parseStreamInfo(streamInfoBytes);
    } else if (type === 4) {
      parseVorbisComments(await reader.readAt(body, Math.min(length, MAX_COMMENT_BYTES)), comments);
    } else if (type === 127) {
      throw new WavFormatError("bad-chunk", `metadata block type 127 at byte ${at} is forbidden (RFC 9639, 8.1)`);
    }
    at = body + length;
  }
  if (!streamInfo || !streamInfoBytes) throw new WavFormatError("no-fmt-chunk", "no STREAMINFO metadata block");
  validate(streamInfo);
  // An encoder that streamed its output may leave the total unknown (0): the last frame's header says it.
  if (streamInfo.totalSamples === 0 && fileSize > at) streamInfo.totalSamples = await samplesFromLastFrame(reader, at, fileSize, streamInfo);
  const bitDepth = Math.ceil(streamInfo.bitsPerSample / 8) * 8;
  const blockAlign = streamInfo.channels * (bitDepth / 8);
  const metadata: FileMetadata = comments.length > 0 ? { text: comments } : {};
  return {
    container: "flac",
    encoding: "pcm",
    formatTag: 0,
    sampleRateHz: streamInfo.sampleRateHz,
    bitDepth,
    validBits: streamInfo.bitsPerSample,
    channels: streamInfo.channels,
    blockAlign,
    dataOffset: at,
    dataBytes: fileSize - at,
    claimedDataBytes: fileSize - at,
    totalFrames: streamInfo.totalSamples,
    isTruncated: false,
    isDataSizeUnwritten: false,
    channelMask: flacChannelMask(streamInfo.channels, comments),
    fileSizeBytes: fileSize,
    metadata,
    chunks,
    trailingBytes: 0,
    audioMd5: null,
    streamInfo,
  };
}
