/**
 * Reads one WAV/BWF/RF64, AIFF/AIFF-C or FLAC file for analysis (the first bytes say which): walks the header
 * with small positioned reads, then reads the
 * whole file once, sequentially, into two reusable buffers (the next read runs while the current buffer is
 * hashed and decoded). Every byte feeds one SHA-256; the data chunk is decoded from the same buffers into
 * reused planar blocks. Memory stays flat whatever the file length; positions go up to 2^53 (RF64 > 4 GB).
 */
import { createHash } from "node:crypto";
import { open, stat, type FileHandle } from "node:fs/promises";
import { performance } from "node:perf_hooks";
import type { AudioBlock, StreamFormat } from "@tidemark/shared/types/analysis";
import { isAiffHeader, readAiffLayout } from "@tidemark/shared/aiff/aiffLayout";
import { isFlacHeader, readFlacLayout, type FlacLayout } from "@tidemark/shared/flac/flacLayout";
import type { AudioFormat, FileMetadata, Finding } from "@tidemark/shared/types/report";
import type { ByteSource } from "@tidemark/shared/wav/byteSource";
import { createDataChunkDecoder } from "@tidemark/shared/wav/dataChunkDecoder";
import { WavFormatError } from "@tidemark/shared/wav/errors";
import { readWavLayout, type WavLayout } from "@tidemark/shared/wav/wavLayout";
import { AudioFileError, audioFileErrorFromSystem } from "./errors.ts";
import { fileByteSource } from "./fileByteSource.ts";

export interface AudioFileInfo {
  layout: WavLayout;
  format: AudioFormat;
  stream: StreamFormat;
  metadata: FileMetadata;
}

export interface AudioFileResult {
  info: AudioFileInfo;
  /** Lowercase hex SHA-256 of every byte of the file. */
  sha256: string;
  /** The further digests asked for with `digests`, lowercase hex. */
  digests: Map<"md5" | "sha1" | "sha512", string>;
  sizeBytes: number;
  /** Float samples that were NaN/±Inf and were replaced by 0 (0 when no block consumer was given). */
  nonFiniteSamples: number;
  /** Index of the first and last frame holding a replaced sample, or null. */
  firstNonFiniteFrame: number | null;
  lastNonFiniteFrame: number | null;
  /** The data chunk is shorter than its header claims; the blocks cover what is there. */
  isTruncated: boolean;
  /** Checks of the stream itself: FLAC decode errors and MD5, BWF `MD5 ` chunk, FLAC truncation. */
  integrityFindings: Finding[];
  /** Time spent waiting for reads, decoding (excluding the block consumer) and hashing. */
  timings: { readMs: number; decodeMs: number; hashMs: number };
}

export interface ReadAudioFileOptions {
  /** Frames per block handed to the consumer (default 65536). */
  blockFrames?: number;
  signal?: AbortSignal;
  /** Called after each read with the bytes read so far (progress within a long file). */
  onRead?: (bytesRead: number) => void;
  /** Further digests of the file's bytes, beside SHA-256, computed in the same read (checksum sidecars). */
  digests?: readonly ("md5" | "sha1" | "sha512")[];
  /**
   * Called once the header is read. Return a block consumer to have the audio decoded; it gets every block
   * in order, and the block's arrays are reused afterwards (copy what you keep). Return nothing to only hash.
   */
  onOpen?: (info: AudioFileInfo) => ((block: AudioBlock) => void) | void;
}

export const DEFAULT_BLOCK_FRAMES = 65536;
/**
 * Sequential reads of 1 MiB: already past where a larger read saves measurable time (a few hundred reads per
 * 600 s file), and the two buffers cost 2 MiB of the 150 MB budget instead of 8 (issue #22).
 */
const READ_BUFFER_BYTES = 1024 * 1024;
/**
 * Read buffers a thread keeps for its next files (two files at once, two buffers each): a scan of many short
 * files made two new ones a file, garbage that piled up outside the JavaScript heap between collections
 * (issue #22). A buffer is taken back only once its file is done with it: every sink copies what it keeps.
 */
const spareBuffers: Uint8Array[] = [];
const SPARE_BUFFERS = 4;
const takeBuffer = (): Uint8Array => spareBuffers.pop() ?? new Uint8Array(READ_BUFFER_BYTES);

export function describeAudioFile(layout: WavLayout): AudioFileInfo {
  const format: AudioFormat = {
    container: layout.container,
    encoding: layout.encoding,
    sampleRateHz: layout.sampleRateHz,
    // The significant bits: a 20-bit file in 24-bit words is a 20-bit file (the stream keeps the container).
    bitDepth: layout.encoding === "pcm" ? layout.validBits : layout.bitDepth,
    channels: layout.channels,
    durationSeconds: layout.totalFrames / layout.sampleRateHz,
  };
  const stream: StreamFormat = {
    sampleRateHz: layout.sampleRateHz,
    channels: layout.channels,
    bitDepth: layout.bitDepth,
    encoding: layout.encoding,
    totalFrames: layout.totalFrames,
    channelMask: layout.channelMask,
    validBits: layout.validBits,
  };
  return { layout, format, stream, metadata: layout.metadata };
}

/** Picks the header walker from the first bytes; anything unknown goes to the WAV walker, which names what it found. */
async function readLayout(source: ByteSource): Promise<WavLayout> {
  const head = await source.readAt(0, 16);
  if (isFlacHeader(head)) return readFlacLayout(source);
  if (isAiffHeader(head)) return readAiffLayout(source);
  return readWavLayout(source);
}

interface StreamSink {
  push(bytes: Uint8Array, fileOffset: number): void | Promise<void>;
  finish(): void | Promise<void>;
  nonFinite: { nonFiniteSamples: number; firstNonFiniteFrame: number | null; lastNonFiniteFrame: number | null } | null;
  findings(): Finding[];
}

/** MD5 of the data chunk's bytes, compared with the BWF `MD5 ` chunk at the end. */
function audioMd5Check(layout: WavLayout): StreamSink | null {
  if (!layout.audioMd5) return null;
  const hash = createHash("md5");
  const start = layout.dataOffset;
  const end = layout.dataOffset + layout.dataBytes;
  let digest = "";
  return {
    push(bytes, offset) {
      const from = Math.max(start, offset);
      const to = Math.min(end, offset + bytes.length);
      if (to > from) hash.update(bytes.subarray(from - offset, to - offset));
    },
    finish() {
      digest = hash.digest("hex");
    },
    nonFinite: null,
    findings() {
      if (digest === layout.audioMd5) return [];
      return [
        {
          code: "audio-md5-mismatch",
          severity: "fail",
          channel: null,
          startSeconds: null,
          endSeconds: null,
          message: `MD5 of the data chunk's ${layout.dataBytes} bytes is ${digest}; the file's "MD5 " chunk says ${layout.audioMd5}: the audio changed after the checksum was written`,
        },
      ];
    },
  };
}

export async function readAudioFile(path: string | Buffer, opts: ReadAudioFileOptions = {}): Promise<AudioFileResult> {
  const blockFrames = opts.blockFrames ?? DEFAULT_BLOCK_FRAMES;
  if (!Number.isInteger(blockFrames) || blockFrames < 1) {
    throw new Error(`blockFrames must be a positive integer, got ${blockFrames}`);
  }
  opts.signal?.throwIfAborted();
  // Checked before opening: opening a FIFO for reading would block until a writer appears.
  const before = await stat(path).catch((error: unknown) => {
    throw audioFileErrorFromSystem(error, path);
  });
  if (before.isDirectory()) throw new AudioFileError("is-directory", `${path}: is a directory, not an audio file`);
  if (!before.isFile()) throw new AudioFileError("not-a-file", `${path}: not a regular file (device, FIFO or socket)`);
  let handle: FileHandle;
  try {
    handle = await open(path, "r");
  } catch (error) {
    throw audioFileErrorFromSystem(error, path);
  }
  try {
    return await readOpenFile(path, handle, blockFrames, opts);
  } finally {
    await handle.close().catch(() => undefined);
  }
}

/**
 * Reads inside `head` (the file's first bytes, already read) are served from it, as copies: the walkers may
 * keep what they get, and the buffer goes on to the next file. Everything else comes from the file.
 */
export function withHead(source: ByteSource, head: Uint8Array): ByteSource {
  return {
    sizeBytes: source.sizeBytes,
    readAt: async (offset, length) => {
      const end = Math.min(source.sizeBytes, offset + length);
      if (offset >= 0 && end <= head.length) return head.slice(offset, Math.max(offset, end));
      return source.readAt(offset, length);
    },
  };
}

async function readOpenFile(
  path: string | Buffer,
  handle: FileHandle,
  blockFrames: number,
  opts: ReadAudioFileOptions,
): Promise<AudioFileResult> {
  const opened = await handle.stat().catch((error: unknown) => {
    throw audioFileErrorFromSystem(error, path);
  });
  if (!opened.isFile()) throw new AudioFileError("not-a-file", `${path}: changed into a non-regular file while opening`);
  const sizeBytes = opened.size;
  const timings = { readMs: 0, decodeMs: 0, hashMs: 0 };
  // The second buffer only once a file needs a second read.
  const buffers: Uint8Array[] = [takeBuffer()];
  const readInto = (buffer: Uint8Array, position: number) =>
    handle.read(buffer, 0, Math.min(buffer.length, sizeBytes - position), position).then(
      (r) => r.bytesRead,
      (error: unknown) => {
        throw audioFileErrorFromSystem(error, path);
      },
    );
  // The first read comes before the header walk, which is served from it as far as it reaches: a short
  // file is read once (issue #22: two reads less a file).
  let firstBytes = 0;
  if (sizeBytes > 0) {
    const t0 = performance.now();
    firstBytes = await readInto(buffers[0], 0);
    timings.readMs += performance.now() - t0;
  }

  const layout = await readLayout(withHead(fileByteSource(handle, sizeBytes), buffers[0].subarray(0, firstBytes))).catch((error: unknown) => {
    if (error instanceof WavFormatError) throw error;
    throw audioFileErrorFromSystem(error, path);
  });
  const info = describeAudioFile(layout);
  const consumer = opts.onOpen?.(info) ?? undefined;

  let consumerMs = 0;
  const onBlock = (block: AudioBlock): void => {
    const t = performance.now();
    consumer?.(block);
    consumerMs += performance.now() - t;
  };
  const sinks: StreamSink[] = [];
  if (layout.container === "flac") {
    // Even when only hashing, FLAC is decoded: its MD5 and frame checks are part of reading it.
    // libFLAC's WebAssembly build costs ≈ 70 ms to load: only a FLAC file pays for it.
    const { createFlacStreamDecoder } = await import("./flacStreamDecoder.ts");
    const flac = await createFlacStreamDecoder(layout as FlacLayout, blockFrames, onBlock);
    sinks.push({
      push: (bytes, offset) => flac.push(bytes, offset),
      finish: async () => {
        await flac.finish();
        layout.trailingBytes = flac.trailingBytes;
      },
      nonFinite: null,
      findings: () => flac.findings,
    });
  } else if (consumer) {
    const decoder = createDataChunkDecoder(layout, blockFrames, onBlock);
    sinks.push({ push: (b, o) => decoder.push(b, o), finish: () => decoder.finish(), nonFinite: decoder.samples, findings: () => [] });
  }
  const md5 = audioMd5Check(layout);
  if (md5) sinks.push(md5);
  const hash = createHash("sha256");
  const extra = (opts.digests ?? []).map((a) => [a, createHash(a)] as const);

  let position = 0;
  let current = 0;
  let pending: Promise<number> | null = sizeBytes > 0 ? Promise.resolve(firstBytes) : null;
  try {
    while (pending) {
      const t0 = performance.now();
      const bytesRead = await pending;
      timings.readMs += performance.now() - t0;
      pending = null;
      if (bytesRead === 0) {
        throw new AudioFileError("io-error", `${path}: file shrank while being read (${position} of ${sizeBytes} bytes)`);
      }
      const chunk = buffers[current].subarray(0, bytesRead);
      const chunkOffset = position;
      position += bytesRead;
      opts.signal?.throwIfAborted();
      opts.onRead?.(position);
      // Start the next read into the other buffer before working on this one.
      if (position < sizeBytes) pending = readInto((buffers[1 - current] ??= takeBuffer()), position);
      const t1 = performance.now();
      hash.update(chunk);
      for (const [, h] of extra) h.update(chunk);
      const t2 = performance.now();
      timings.hashMs += t2 - t1;
      if (sinks.length > 0) {
        const before = consumerMs;
        for (const sink of sinks) await sink.push(chunk, chunkOffset);
        timings.decodeMs += performance.now() - t2 - (consumerMs - before);
      }
      current = 1 - current;
    }
    const before = consumerMs;
    const t = performance.now();
    for (const sink of sinks) await sink.finish();
    timings.decodeMs += performance.now() - t - (consumerMs - before);
  } finally {
    // Never close the file under an in-flight read, nor hand its buffer on.
    if (pending) await pending.catch(() => undefined);
    for (const b of buffers) if (spareBuffers.length < SPARE_BUFFERS) spareBuffers.push(b);
  }
  const samples = sinks.find((s) => s.nonFinite)?.nonFinite;
  return {
    info,
    sha256: hash.digest("hex"),
    digests: new Map(extra.map(([a, h]) => [a, h.digest("hex")])),
    sizeBytes,
    nonFiniteSamples: samples?.nonFiniteSamples ?? 0,
    firstNonFiniteFrame: samples?.firstNonFiniteFrame ?? null,
    lastNonFiniteFrame: samples?.lastNonFiniteFrame ?? null,
    isTruncated: layout.isTruncated,
    integrityFindings: sinks.flatMap((s) => s.findings()),
    timings,
  };
}
