/**
 * The `fmt ` chunk: WAVEFORMATEX and WAVE_FORMAT_EXTENSIBLE (Microsoft's multichannel WAVE extension),
 * validated against what Tidemark decodes: PCM 8/16/24/32 (12 and 20 bits in 16/24-bit containers), IEEE float
 * 32/64, 8-bit G.711 A-law/µ-law, 1–8 channels, 8–384 kHz.
 */
import type { Encoding } from "../types/report.ts";
import { WavFormatError } from "./errors.ts";
import { readUint16, readUint32 } from "./bytes.ts";

export const WAVE_FORMAT_PCM = 0x0001;
export const WAVE_FORMAT_IEEE_FLOAT = 0x0003;
export const WAVE_FORMAT_ALAW = 0x0006;
export const WAVE_FORMAT_MULAW = 0x0007;
export const WAVE_FORMAT_EXTENSIBLE = 0xfffe;

export const MIN_SAMPLE_RATE_HZ = 8_000;
export const MAX_SAMPLE_RATE_HZ = 384_000;
export const MAX_CHANNELS = 8;

/** Names of common compressed tags, so the error says what the file is (Microsoft's mmreg.h registry). */
const COMPRESSED_TAG_NAMES: Record<number, string> = {
  0x0002: "Microsoft ADPCM",
  0x0011: "IMA ADPCM",
  0x0031: "GSM 6.10",
  0x0050: "MPEG",
  0x0055: "MPEG Layer 3",
  0x0092: "Dolby AC-3 SPDIF",
  0x0160: "WMA",
  0x0161: "WMA",
  0x2000: "Dolby AC-3",
  0xf1ac: "FLAC",
};

/** Tail of every KSDATAFORMAT_SUBTYPE GUID: {XXXXXXXX-0000-0010-8000-00AA00389B71}, bytes 4..15 as stored. */
const SUBFORMAT_GUID_TAIL = [0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xaa, 0x00, 0x38, 0x9b, 0x71];

export interface FmtChunk {
  /** The tag as written (0xFFFE for WAVE_FORMAT_EXTENSIBLE). */
  formatTag: number;
  /** PCM or float, from the tag or the extensible SubFormat. */
  encoding: Encoding;
  channels: number;
  sampleRateHz: number;
  blockAlign: number;
  /** Container bits per sample. */
  bitDepth: number;
  /** Significant bits (wValidBitsPerSample when extensible, else bitDepth). */
  validBits: number;
  /** Speaker positions (dwChannelMask) when extensible, else null. */
  channelMask: number | null;
  isExtensible: boolean;
}

const hex4 = (tag: number): string => `0x${tag.toString(16).padStart(4, "0")}`;

function encodingForTag(tag: number): Encoding {
  if (tag === WAVE_FORMAT_PCM) return "pcm";
  if (tag === WAVE_FORMAT_IEEE_FLOAT) return "float";
  if (tag === WAVE_FORMAT_ALAW) return "alaw";
  if (tag === WAVE_FORMAT_MULAW) return "mulaw";
  const name = COMPRESSED_TAG_NAMES[tag];
  throw new WavFormatError(
    "unsupported-encoding",
    `format tag ${hex4(tag)}${name ? ` (${name})` : ""} is not supported; ` +
      "expected PCM (0x0001), IEEE float (0x0003), A-law (0x0006) or µ-law (0x0007)",
  );
}

/** Parses and validates the fmt body (only its first 40 bytes matter; `body` may be shorter than claimed). */
export function parseFmtChunk(body: Uint8Array): FmtChunk {
  if (body.length < 16) {
    throw new WavFormatError("bad-fmt-chunk", `fmt chunk is ${body.length} bytes; at least 16 expected`);
  }
  const formatTag = readUint16(body, 0);
  const channels = readUint16(body, 2);
  const sampleRateHz = readUint32(body, 4);
  const blockAlign = readUint16(body, 12);
  let bitDepth = readUint16(body, 14);
  const isExtensible = formatTag === WAVE_FORMAT_EXTENSIBLE;
  let encoding: Encoding;
  let validBits = bitDepth;
  let channelMask: number | null = null;
  if (isExtensible) {
    // cbSize 22 follows the 18-byte WAVEFORMATEX: 2 + 4 + 16 more bytes.
    if (body.length < 40) {
      throw new WavFormatError(
        "bad-fmt-chunk",
        `WAVE_FORMAT_EXTENSIBLE fmt chunk is ${body.length} bytes; 40 expected`,
      );
    }
    validBits = readUint16(body, 18) || bitDepth;
    channelMask = readUint32(body, 20);
    for (let i = 0; i < SUBFORMAT_GUID_TAIL.length; i++) {
      if (body[28 + i] !== SUBFORMAT_GUID_TAIL[i] || (i < 2 && body[26 + i] !== 0)) {
        throw new WavFormatError("unsupported-encoding", "extensible SubFormat GUID is not a standard WAVE format GUID");
      }
    }
    encoding = encodingForTag(readUint16(body, 24));
  } else {
    encoding = encodingForTag(formatTag);
  }
  // 12- and 20-bit PCM sit left-justified in 16/24-bit containers (the fmt depth names the valid bits).
  if (encoding === "pcm" && !isExtensible && (bitDepth === 12 || bitDepth === 20)) {
    validBits = bitDepth;
    bitDepth += 4;
  }
  validateFormat({ encoding, channels, sampleRateHz, bitDepth, validBits, blockAlign });
  return { formatTag, encoding, channels, sampleRateHz, blockAlign, bitDepth, validBits, channelMask, isExtensible };
}

function validateFormat(f: {
  encoding: Encoding;
  channels: number;
  sampleRateHz: number;
  bitDepth: number;
  validBits: number;
  blockAlign: number;
}): void {
  if (f.channels < 1 || f.channels > MAX_CHANNELS) {
    throw new WavFormatError("bad-channel-count", `${f.channels} channels; 1 to ${MAX_CHANNELS} supported`);
  }
  if (f.sampleRateHz < MIN_SAMPLE_RATE_HZ || f.sampleRateHz > MAX_SAMPLE_RATE_HZ) {
    throw new WavFormatError(
      "bad-sample-rate",
      `sample rate ${f.sampleRateHz} Hz; ${MIN_SAMPLE_RATE_HZ} to ${MAX_SAMPLE_RATE_HZ} Hz supported`,
    );
  }
  const allowed = f.encoding === "float" ? [32, 64] : f.encoding === "pcm" ? [8, 16, 24, 32] : [8];
  if (!allowed.includes(f.bitDepth)) {
    const name = { pcm: "PCM", float: "float", alaw: "A-law", mulaw: "µ-law" }[f.encoding];
    throw new WavFormatError("bad-bit-depth", `${f.bitDepth} bits per sample in ${name} data; ${allowed.join(", ")} expected`);
  }
  if (f.validBits > f.bitDepth) {
    throw new WavFormatError("bad-bit-depth", `${f.validBits} valid bits in a ${f.bitDepth}-bit container`);
  }
  const expectedAlign = f.channels * (f.bitDepth / 8);
  if (f.blockAlign !== expectedAlign) {
    throw new WavFormatError(
      "bad-block-align",
      `block align ${f.blockAlign} bytes; ${expectedAlign} expected for ${f.channels} × ${f.bitDepth}-bit`,
    );
  }
}
