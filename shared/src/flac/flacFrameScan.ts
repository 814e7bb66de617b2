/**
 * The FLAC framer's byte buffer and its two per-byte loops (sync search, CRC-16) in WebAssembly
 * (flacFrameScan.wat, built into flacFrameScan.generated.ts), loaded through shared/src/wasm/kernelModule.ts:
 * one instance per buffer, its memory made at full size and never grown. Null where WebAssembly or its SIMD is
 * missing; the framer then keeps its buffer in an ordinary array and runs its JavaScript loops, which give the
 * same results (tests/shared/flacFrameScan.test.ts). Measured on the project's machine (Node 20, CPU time, the
 * bench's 152 MB FLAC in 21 kB frames, 4 runs): CRC-16 ≈ 43 ms against ≈ 110–140 ms for the JavaScript
 * slice-by-16, sync search ≈ 9 ms against ≈ 88 ms for Uint8Array.indexOf stopping at every 0xFF byte.
 */
import { kernelModule } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./flacFrameScan.generated.ts";

export interface FlacFrameScan {
  /** The buffer the framer fills; offsets below are indexes into it. */
  readonly bytes: Uint8Array;
  /**
   * The first q in [from, end) where bytes[q] is 0xFF and either q + 1 = end or bytes[q + 1] & 0xFE is 0xF8
   * (a frame sync code, RFC 9639, 9.1), else −1.
   */
  sync(from: number, end: number): number;
  /** CRC-16 of bytes[from, to) continuing from `crc` (RFC 9639, 9.3), as flacFramer.ts's crc16. */
  crc16(from: number, to: number, crc: number): number;
}

interface Exports {
  sync(from: number, end: number): number;
  crc16(from: number, to: number, crc: number): number;
}

/** The slice-by-16 table (16 × 256 uint16) sits below the buffer. */
const TABLE_BYTES = 16 * 256 * 2;
/** Room after the buffer for the search's vector loads past its end. */
const TAIL_BYTES = 32;

const instantiate = kernelModule(WASM_MODULE_BYTES);

/** A buffer of `capacity` bytes with the kernel over it; `table` is flacFramer.ts's CRC16_16. */
export function createFlacFrameScan(capacity: number, table: Uint16Array): FlacFrameScan | null {
  if (table.length !== TABLE_BYTES / 2) throw new RangeError(`FLAC frame scan: a ${TABLE_BYTES / 2}-entry CRC table expected, got ${table.length}`);
  const instance = instantiate(TABLE_BYTES + capacity + TAIL_BYTES);
  if (!instance) return null;
  new Uint16Array(instance.memory.buffer, 0, table.length).set(table);
  const k = instance.exports as unknown as Exports;
  const base = TABLE_BYTES;
  return {
    bytes: new Uint8Array(instance.memory.buffer, base, capacity),
    sync(from, end) {
      const q = k.sync(base + from, base + end);
      return q < 0 ? -1 : q - base;
    },
    crc16(from, to, crc) {
      return k.crc16(base + from, base + to, crc);
    },
  };
}
