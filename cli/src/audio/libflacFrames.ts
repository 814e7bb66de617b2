/**
 * One FLAC frame at a time through libFLAC's WebAssembly build (@wasm-audio-decoders/flac, pinned), reading
 * the decoded samples straight from the WebAssembly heap. The package's public `decodeFrames` copies every
 * frame's output twice (a slice per channel, then a concatenation per call) and returns new arrays each time;
 * on a 600 s stereo file that was ≈ 0.15 s and 350 MB of garbage. Here the caller gets a view of the heap,
 * valid until the next call, and rescales it once into its own blocks.
 *
 * This uses the package's internals (its `_decoder` and the C functions `decode_frame`, `create_decoder`, `destroy_decoder`, `malloc`, `free`, as
 * in its src/FLACDecoder.js and src/flac_decoder.c); `createLibflacFrames` checks they are there and says so
 * if an upgrade moved them (tests/cli/audioFormats.test.ts decodes through this module).
 */
import { FLACDecoder } from "@wasm-audio-decoders/flac";

export interface DecodedFrame {
  /** Sample frames decoded (0 when libFLAC could not decode the frame). */
  samples: number;
  channels: number;
  /** Planar float samples, channel c at [c·samples, (c+1)·samples), each divided by 2^(bits−1) − 1 by libFLAC (the codes themselves with `exactCodes`). */
  data: Float32Array;
  /** libFLAC's error and state strings, or null. */
  error: string | null;
}

export interface LibflacFrames {
  /**
   * True when the decoded floats are the integer codes themselves (see `exactCodes` of createLibflacFrames),
   * false when libFLAC divided each by 2^(bits−1) − 1 as the package ships it.
   */
  readonly exactCodes?: boolean;
  /** Decodes one whole frame. The result is valid until the next call. */
  decode(frame: Uint8Array): DecodedFrame;
  /**
   * Replaces libFLAC's decoder by a fresh one in the same module (cheap: no new WebAssembly instance), forgetting
   * the previous frame. Call it after frames were left out: see
   * flacStreamDecoder.ts for why libFLAC must not see the sample numbers jump.
   */
  restart(): void;
  free(): void;
}

interface WasmExports {
  HEAP: ArrayBuffer;
  malloc(bytes: number): number;
  free(ptr: number): void;
  decode_frame(decoder: number, input: number, length: number): number;
  create_decoder(channels: number, sampleRate: number, bitsPerSample: number, samples: number, outPtr: number, outLen: number, error: number, state: number): number;
  destroy_decoder(decoder: number): void;
}

interface Cell {
  ptr: number;
}

/** The fields of the package's inner decoder this module reads (src/FLACDecoder.js, 0.2.x). */
interface InnerDecoder {
  _common: { wasm: WasmExports; codeToString(ptr: number): string };
  _decoder: number;
  _channels: Cell;
  _sampleRate: Cell;
  _bitsPerSample: Cell;
  _samplesDecoded: Cell;
  _outputBufferPtr: Cell;
  _outputBufferLen: Cell;
  _errorStringPtr: Cell;
  _stateStringPtr: Cell;
}

const EMPTY = new Float32Array(0);

/**
 * Where the pinned build (0.2.11) keeps its write callback's divisors, one float32 each for 8, 16, 24 and 32 bits
 * (2^(bits−1) − 1, the last rounded to float32), in its read-only data: the callback (func 41 of its WebAssembly,
 * read with wabt's wasm2wat) loads the one for the frame's depth and divides every sample by it. Found by reading
 * that code, not documented by the package: `useExactCodes` checks the four values before it touches them.
 */
export const LIBFLAC_DIVISORS_AT = 6248;
const LIBFLAC_DIVISORS = [127, 32767, 8388607, 2147483648];

/**
 * Sets the build's divisors to 1 in `heap` (its memory) when the four floats at LIBFLAC_DIVISORS_AT are exactly
 * those the pinned build holds; the callback then hands out each code as a float32, exact up to 24 bits, which
 * the reader turns into samples and MD5 bytes without recovering the code by rounding (≈ 36 ms less CPU time on
 * the bench's 600 s 24-bit FLAC, in a stand-alone measurement of the rescaling kernel). False, and nothing
 * written, for any other contents: the package then divides as it ships.
 */
export function useExactCodes(heap: ArrayBuffer): boolean {
  if (heap.byteLength < LIBFLAC_DIVISORS_AT + 16) return false;
  const divisors = new Float32Array(heap, LIBFLAC_DIVISORS_AT, 4);
  if (!LIBFLAC_DIVISORS.every((v, i) => divisors[i] === v)) return false;
  divisors.fill(1);
  return true;
}

export interface LibflacFramesOptions {
  /**
   * Ask for the codes themselves instead of libFLAC's fractions (`useExactCodes`); the result's `exactCodes` says
   * whether it took. For 8-, 16- and 24-bit streams decoded as they are: the callers of odd depths and of 32 bits
   * expect the package's scale.
   */
  exactCodes?: boolean;
}

export async function createLibflacFrames(options: LibflacFramesOptions = {}): Promise<LibflacFrames> {
  const outer = new FLACDecoder();
  await outer.ready;
  const inner = (outer as unknown as { _decoder?: Partial<InnerDecoder> })._decoder;
  const wasm = inner?._common?.wasm;
  const cells = [inner?._channels, inner?._sampleRate, inner?._bitsPerSample, inner?._samplesDecoded, inner?._outputBufferPtr, inner?._outputBufferLen, inner?._errorStringPtr, inner?._stateStringPtr];
  if (!inner || !wasm || typeof wasm.decode_frame !== "function" || typeof wasm.malloc !== "function" || typeof wasm.create_decoder !== "function" || typeof wasm.destroy_decoder !== "function" || typeof inner._decoder !== "number" || cells.some((c) => typeof c?.ptr !== "number")) {
    outer.free();
    throw new Error("@wasm-audio-decoders/flac: expected the 0.2.x internals (_decoder._common.wasm.decode_frame and the output cells); the package changed, see cli/src/audio/libflacFrames.ts");
  }
  const d = inner as InnerDecoder;
  let handle = d._decoder;
  // Word indexes of the cells the C side writes (pointers into the heap, 4-byte aligned).
  const channelsAt = d._channels.ptr >> 2;
  const samplesAt = d._samplesDecoded.ptr >> 2;
  const outPtrAt = d._outputBufferPtr.ptr >> 2;
  const outLenAt = d._outputBufferLen.ptr >> 2;
  const errorAt = d._errorStringPtr.ptr >> 2;
  const stateAt = d._stateStringPtr.ptr >> 2;
  let lastOut = 0;
  const result: DecodedFrame = { samples: 0, channels: 0, data: EMPTY, error: null };
  // Each FLACDecoder has its own instance and memory, so this touches this file's decoder only (and survives restart()).
  const exactCodes = options.exactCodes === true && useExactCodes(wasm.HEAP);

  return {
    exactCodes,
    decode(frame) {
      // The previous frame's output, kept alive for the caller until now.
      if (lastOut !== 0) wasm.free(lastOut);
      lastOut = 0;
      // libFLAC's read callback frees the input once it has consumed it (flac_decoder.c), so each frame gets its own.
      const input = wasm.malloc(frame.length);
      new Uint8Array(wasm.HEAP, input, frame.length).set(frame);
      wasm.decode_frame(handle, input, frame.length);
      // Views are made after the call: the heap may have grown (and its old buffer detached) meanwhile.
      const words = new Uint32Array(wasm.HEAP);
      const errorPtr = words[errorAt];
      const statePtr = words[stateAt];
      const samples = words[samplesAt];
      const out = words[outPtrAt];
      const length = words[outLenAt];
      let error: string | null = null;
      if (errorPtr !== 0 || statePtr !== 0) {
        const parts: string[] = [];
        const e = errorPtr !== 0 ? d._common.codeToString(errorPtr) : "";
        const s = statePtr !== 0 ? d._common.codeToString(statePtr) : "";
        if (e) parts.push(`Error: ${e}`);
        if (s) parts.push(`State: ${s}`);
        if (parts.length > 0) error = parts.join("; ");
      }
      words[samplesAt] = 0;
      words[outLenAt] = 0;
      words[outPtrAt] = 0;
      lastOut = out;
      result.error = error;
      result.channels = words[channelsAt];
      result.samples = out !== 0 ? samples : 0;
      result.data = out !== 0 ? new Float32Array(wasm.HEAP, out, length) : EMPTY;
      return result;
    },
    restart() {
      if (lastOut !== 0) wasm.free(lastOut);
      lastOut = 0;
      wasm.destroy_decoder(handle);
      handle = wasm.create_decoder(
        d._channels.ptr, d._sampleRate.ptr, d._bitsPerSample.ptr, d._samplesDecoded.ptr,
        d._outputBufferPtr.ptr, d._outputBufferLen.ptr, d._errorStringPtr.ptr, d._stateStringPtr.ptr,
      );
      // The package's own free() destroys whichever decoder it holds.
      d._decoder = handle;
    },
    free() {
      if (lastOut !== 0) wasm.free(lastOut);
      lastOut = 0;
      outer.free();
    },
  };
}
