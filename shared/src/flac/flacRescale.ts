/**
 * The FLAC reader's stereo rescaling in WebAssembly SIMD (flacRescale.wat, built into flacRescale.generated.ts),
 * loaded through shared/src/wasm/kernelModule.ts: one instance per file, its memory made at full size and
 * never grown, holding the decoded frame's codes (copied in), the block's two planar channels and the MD5 input, so
 * the reader hands out views into it. Null where WebAssembly or its SIMD is missing; the reader then runs its
 * JavaScript loops, which give the same results bit for bit (tests/shared/flacRescale.test.ts).
 */
import { kernelModule } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./flacRescale.generated.ts";

export interface FlacRescaleLayout {
  /** The longest frame, in sample frames (STREAMINFO's maximum block size). */
  frameCapacity: number;
  /** Sample frames of one block handed on. */
  blockFrames: number;
  /** Bytes of the MD5 input gathered before one hash update. */
  md5Bytes: number;
}

export interface FlacRescale {
  /** The decoded frame's codes go here: channel 0 then channel 1, frameCapacity samples each. */
  readonly input: Int32Array;
  readonly left: Float32Array;
  readonly right: Float32Array;
  readonly md5: Uint8Array;
  /**
   * `n` frames (a multiple of 4) from sample `from` of `input` into left and right from `to` (each code times
   * `inverse`), and into `md5` from byte `md5At`, `width` (2 or 3) bytes a code.
   */
  stereo(from: number, n: number, to: number, md5At: number, width: number, inverse: number): void;
}

interface Exports {
  stereo(src: number, stride: number, n: number, left: number, right: number, md5: number, width: number, inverse: number): void;
}

const instantiate = kernelModule(WASM_MODULE_BYTES);

export function createFlacRescale(layout: FlacRescaleLayout): FlacRescale | null {
  const inputAt = 0;
  const inputBytes = 2 * layout.frameCapacity * 4;
  // 16-byte aligned starts: the kernel's vector loads and stores need no alignment, but they are cheaper so.
  const leftAt = align16(inputAt + inputBytes);
  const rightAt = align16(leftAt + layout.blockFrames * 4);
  const md5At = align16(rightAt + layout.blockFrames * 4);
  const instance = instantiate(md5At + layout.md5Bytes);
  if (!instance) return null;
  const buffer = instance.memory.buffer;
  const k = instance.exports as unknown as Exports;
  const stride = layout.frameCapacity;
  return {
    input: new Int32Array(buffer, inputAt, 2 * layout.frameCapacity),
    left: new Float32Array(buffer, leftAt, layout.blockFrames),
    right: new Float32Array(buffer, rightAt, layout.blockFrames),
    md5: new Uint8Array(buffer, md5At, layout.md5Bytes),
    stereo(from, n, to, md5Offset, width, inverse) {
      k.stereo(inputAt + from * 4, stride, n, leftAt + to * 4, rightAt + to * 4, md5At + md5Offset, width, inverse);
    },
  };
}

function align16(n: number): number {
  return (n + 15) & ~15;
}
