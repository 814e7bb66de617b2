/** The RF64 `ds64` chunk (EBU Tech 3306, section 3.2): 64-bit sizes for files past 4 GB. */
import { WavFormatError } from "./errors.ts";
import { isPrintableFourCC, readFourCC, readUint32, readUint64 } from "./bytes.ts";

export interface Ds64Chunk {
  riffSizeBytes: number;
  dataSizeBytes: number;
  sampleCount: number;
  /** 64-bit sizes of other chunks whose 32-bit size field holds 0xFFFFFFFF, by chunk id. */
  chunkSizes: Map<string, number>;
}

/** Fixed part: riffSize, dataSize, sampleCount (8 bytes each), tableLength (4). */
const DS64_FIXED_BYTES = 28;
const TABLE_ENTRY_BYTES = 12;

export function parseDs64Chunk(body: Uint8Array, declaredSize: number): Ds64Chunk {
  // Some writers omit tableLength; the three sizes are the minimum (24 bytes).
  if (declaredSize < 24 || body.length < 24) {
    throw new WavFormatError("bad-ds64", `ds64 chunk is ${Math.min(declaredSize, body.length)} bytes; at least 24 expected`);
  }
  const riffSizeBytes = readUint64(body, 0);
  const dataSizeBytes = readUint64(body, 8);
  const sampleCount = readUint64(body, 16);
  if (riffSizeBytes === null || dataSizeBytes === null || sampleCount === null) {
    throw new WavFormatError("bad-ds64", "ds64 chunk holds a size above 2^53 bytes");
  }
  const chunkSizes = new Map<string, number>();
  if (body.length >= DS64_FIXED_BYTES) {
    const tableLength = readUint32(body, 24);
    const available = Math.floor((body.length - DS64_FIXED_BYTES) / TABLE_ENTRY_BYTES);
    if (tableLength > available) {
      throw new WavFormatError("bad-ds64", `ds64 table claims ${tableLength} entries; room for ${available}`);
    }
    for (let i = 0; i < tableLength; i++) {
      const at = DS64_FIXED_BYTES + i * TABLE_ENTRY_BYTES;
      const size = readUint64(body, at + 4);
      if (!isPrintableFourCC(body, at) || size === null) {
        throw new WavFormatError("bad-ds64", `ds64 table entry ${i} is not a chunk id and 64-bit size`);
      }
      chunkSizes.set(readFourCC(body, at), size);
    }
  }
  return { riffSizeBytes, dataSizeBytes, sampleCount, chunkSizes };
}
