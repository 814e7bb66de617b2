/**
 * Decodes the data chunk from a file's bytes fed in order, in buffers of any size, into planar blocks
 * of a fixed frame count (the last one shorter). A frame split across two buffers is completed in a
 * small carry buffer; the planar block arrays are allocated once and reused for every block.
 */
import type { AudioBlock } from "../types/analysis.ts";
import { createSampleDecoder, type SampleDecoder, type SampleFormat } from "./sampleDecoder.ts";
import type { WavLayout } from "./wavLayout.ts";

export type DataChunkLayout = Pick<WavLayout, "dataOffset" | "totalFrames" | "blockAlign" | "channels" | "encoding" | "bitDepth"> &
  Pick<SampleFormat, "bigEndian" | "signed8Bit">;

export interface DataChunkDecoder {
  /** Feeds the next bytes of the file, which start at file offset `fileOffset` (contiguous with the last push). */
  push(bytes: Uint8Array, fileOffset: number): void;
  /** Emits the last, partial block. Call once after the last push. */
  finish(): void;
  readonly framesDecoded: number;
  /** Non-finite sample counts and positions. */
  readonly samples: SampleDecoder;
}

export function createDataChunkDecoder(
  layout: DataChunkLayout,
  blockFrames: number,
  onBlock: (block: AudioBlock) => void,
): DataChunkDecoder {
  if (!Number.isInteger(blockFrames) || blockFrames < 1) {
    throw new Error(`blockFrames must be a positive integer, got ${blockFrames}`);
  }
  return new BlockingDecoder(layout, blockFrames, onBlock);
}

class BlockingDecoder implements DataChunkDecoder {
  readonly samples: SampleDecoder;
  framesDecoded = 0;
  private readonly planar: Float32Array[];
  private readonly carry: Uint8Array;
  private carryBytes = 0;
  private filled = 0;
  private blockStartFrame = 0;
  private readonly dataEnd: number;

  constructor(
    private readonly layout: DataChunkLayout,
    private readonly blockFrames: number,
    private readonly onBlock: (block: AudioBlock) => void,
  ) {
    this.samples = createSampleDecoder(layout);
    const frames = Math.max(1, Math.min(blockFrames, layout.totalFrames));
    this.planar = Array.from({ length: layout.channels }, () => new Float32Array(frames));
    this.carry = new Uint8Array(layout.blockAlign);
    this.dataEnd = layout.dataOffset + layout.totalFrames * layout.blockAlign;
  }

  /** File offset of the next data byte wanted. */
  private get nextByte(): number {
    return this.layout.dataOffset + this.framesDecoded * this.layout.blockAlign + this.carryBytes;
  }

  push(bytes: Uint8Array, fileOffset: number): void {
    const want = this.nextByte;
    const end = Math.min(fileOffset + bytes.length, this.dataEnd);
    if (end <= want) return;
    if (fileOffset > want) {
      throw new Error(`data bytes must arrive in order: expected offset ${want}, got ${fileOffset}`);
    }
    const align = this.layout.blockAlign;
    let at = want - fileOffset;
    const stop = end - fileOffset;
    if (this.carryBytes > 0) {
      const take = Math.min(align - this.carryBytes, stop - at);
      this.carry.set(bytes.subarray(at, at + take), this.carryBytes);
      this.carryBytes += take;
      at += take;
      if (this.carryBytes < align) return;
      this.carryBytes = 0;
      this.decodeFrames(this.carry, 0, 1);
    }
    const whole = Math.floor((stop - at) / align);
    if (whole > 0) this.decodeFrames(bytes, at, whole);
    at += whole * align;
    if (at < stop) {
      this.carry.set(bytes.subarray(at, stop), 0);
      this.carryBytes = stop - at;
    }
  }

  private decodeFrames(bytes: Uint8Array, byteOffset: number, frames: number): void {
    let at = byteOffset;
    let left = frames;
    while (left > 0) {
      const n = Math.min(left, this.blockFrames - this.filled);
      this.samples.decode(bytes, at, n, this.planar, this.filled, this.framesDecoded);
      this.filled += n;
      this.framesDecoded += n;
      at += n * this.layout.blockAlign;
      left -= n;
      if (this.filled === this.blockFrames) this.emit();
    }
  }

  private emit(): void {
    const frames = this.filled;
    this.filled = 0;
    const startFrame = this.blockStartFrame;
    this.blockStartFrame += frames;
    this.onBlock({ channels: this.planar, frames, startFrame });
  }

  finish(): void {
    if (this.filled > 0) this.emit();
  }
}
