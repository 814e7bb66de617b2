/**
 * One FLAC frame at a time through libFLAC's WebAssembly build (@wasm-audio-decoders/flac, pinned), handing out
 * the decoded codes as libFLAC holds them: 32-bit integers in its own memory, valid until the next call.
 *
 * The package's write callback converts every sample to float32 (code / (2^(bits−1) − 1), only for 8, 16, 24
 * and 32 bits) into a buffer it allocates for each frame, which the reader then had to round back to codes for
 * STREAMINFO's MD5: on the bench's 600 s 24-bit stereo FLAC that callback alone took ≈ 65 ms of the reading
 * thread. So this module instantiates the package's compiled module itself, with the same answers to its
 * imports as the package gives, and puts its own callback in the table slot of the package's: it only notes
 * where libFLAC's channel buffers are. The codes are exact at every depth up to 32 bits.
 *
 * This relies on the package's internals (0.2.x: `_decoder._common.wasm.getModule`, the export and import names
 * of its src/EmscriptenWasm.js, the arguments of `create_decoder` and `decode_frame` in its src/FLACDecoder.js,
 * and its write callback being WebAssembly function 41); `createLibflacFrames` checks each and says so if an
 * upgrade moved them (tests/cli/libflacFrames.test.ts decodes through this module against `flac -d`).
 */
import { FLACDecoder } from "@wasm-audio-decoders/flac";
import { WASM_MODULE_BYTES as WRITE_HOOK_BYTES } from "@tidemark/shared/flac/libflacWriteHook.generated";

export interface DecodedFrame {
  /** Sample frames decoded (0 when libFLAC could not decode the frame). */
  samples: number;
  channels: number;
  /** libFLAC's memory as 32-bit words: channel c's codes are codes[offsets[c]] onwards, `samples` of them. */
  codes: Int32Array;
  /** Word index of each channel's first code in `codes`. */
  offsets: number[];
  /** libFLAC's error and state strings, or null. */
  error: string | null;
}

export interface LibflacFrames {
  /** Decodes one whole frame. The result, and the codes it points at, are valid until the next call. */
  decode(frame: Uint8Array): DecodedFrame;
  /**
   * Replaces libFLAC's decoder by a fresh one in the same instance, forgetting the previous frame. Call it after
   * frames were left out: see flacStreamDecoder.ts for why libFLAC must not see the sample numbers jump.
   */
  restart(): void;
  free(): void;
}

// The CLI is built without DOM typings: just what is used of the WebAssembly global.
interface WasmTable {
  readonly length: number;
  get(index: number): unknown;
  set(index: number, value: unknown): void;
}
interface WasmMemory {
  readonly buffer: ArrayBuffer;
}
type WasmModule = object;
interface WasmApi {
  Module: {
    new (bytes: Uint8Array): WasmModule;
    exports(module: WasmModule): { name: string; kind: string }[];
    imports(module: WasmModule): { module: string; name: string; kind: string }[];
  };
  Instance: new (module: WasmModule, imports?: object) => { exports: Record<string, unknown> };
  instantiate(module: WasmModule, imports?: object): Promise<{ exports: Record<string, unknown> }>;
}
const wasmApi = (globalThis as unknown as { WebAssembly: WasmApi }).WebAssembly;

interface LibflacExports {
  /** Emscripten's constructors, run once an instance is made. */
  k(): void;
  m(bytes: number): number;
  n(channels: number, sampleRate: number, bitsPerSample: number, samples: number, outPtr: number, outLen: number, error: number, state: number): number;
  o(decoder: number): void;
  p(decoder: number, input: number, length: number): number;
  j: WasmMemory;
  q: WasmTable;
}

const PACKAGE_CHANGED = "@wasm-audio-decoders/flac: expected the 0.2.x build (see cli/src/audio/libflacFrames.ts)";
/** The package's write callback: WebAssembly function 41 of the pinned build (0.2.11), a 4-argument function. */
const PACKAGE_WRITE_CALLBACK = "41";
/** Exports and imports of the pinned build, as its src/EmscriptenWasm.js names them. */
const EXPORTS: Record<string, string> = { j: "memory", k: "function", l: "function", m: "function", n: "function", o: "function", p: "function", q: "table" };
const IMPORTS = "abcdefghi";
/** FLAC__STREAM_DECODER_WRITE_STATUS_CONTINUE. */
const CONTINUE = 0;
/** The package's cells, in create_decoder's order: channels, rate, bits, samples, output, its length, error, state. */
const CELLS = 8;

let libflacModule: Promise<WasmModule> | null = null;
let writeHookModule: WasmModule | null = null;

/** The package's compiled module, once per process: the package compiles it and keeps it; one decoder made to reach it. */
function loadLibflacModule(): Promise<WasmModule> {
  libflacModule ??= (async () => {
    const outer = new FLACDecoder();
    await outer.ready;
    try {
      const wasm = (outer as unknown as { _decoder?: { _common?: { wasm?: { getModule?: () => Promise<unknown> } } } })._decoder?._common?.wasm;
      const module = typeof wasm?.getModule === "function" ? await wasm.getModule() : null;
      if (typeof module !== "object" || module === null || Object.prototype.toString.call(module) !== "[object WebAssembly.Module]") throw new Error(`${PACKAGE_CHANGED}: no compiled module behind _decoder._common.wasm.getModule()`);
      const exports = new Map(wasmApi.Module.exports(module).map((e) => [e.name, e.kind as string]));
      const imports = wasmApi.Module.imports(module);
      const shapeOk = Object.entries(EXPORTS).every(([name, kind]) => exports.get(name) === kind) &&
        imports.length === IMPORTS.length && imports.every((i) => i.module === "a" && i.kind === "function" && IMPORTS.includes(i.name));
      if (!shapeOk) throw new Error(`${PACKAGE_CHANGED}: its WebAssembly exports or imports differ`);
      return module;
    } finally {
      outer.free();
    }
  })();
  return libflacModule;
}

/**
 * The package's answers to its imports (src/EmscriptenWasm.js), for a build without a file system or heap growth:
 * exit and abort throw, file calls answer ENOSYS (52) or ESPIPE (70), the heap refuses to grow, timers are not set.
 */
function packageImports(): object {
  return {
    a: {
      a: (code: number) => {
        throw new Error(`libFLAC exited (${code})`);
      },
      b: () => undefined,
      c: () => {
        throw new Error("libFLAC aborted");
      },
      d: () => 0,
      e: () => 0,
      f: () => 70,
      g: () => 52,
      h: () => 52,
      i: () => 52,
    },
  };
}

/**
 * One instance of the module with our write callback in its table, its 16 MB heap and the package's cells. A
 * thread keeps a few that ended cleanly for its next files: a scan of many short FLACs otherwise made a 16 MB
 * memory a file for the garbage collector to find (301 one-second files: 214 full collections, ≈ 1.4 s of the
 * scan's 5.5 s in a CPU profile, 6 December 2026).
 */
interface LibflacInstance {
  lib: LibflacExports;
  memory: WasmMemory;
  /** The views of `memory` and the frame the write callback last described. */
  state: { codes: Int32Array; words: Uint32Array; result: DecodedFrame; written: boolean };
  cells: number;
}

/** Instances kept per thread: a scan worker reads up to two files at once. */
const POOLED_INSTANCES = 2;
const pool: LibflacInstance[] = [];

async function newInstance(): Promise<LibflacInstance> {
  const module = await loadLibflacModule();
  const instance = await wasmApi.instantiate(module, packageImports());
  const lib = instance.exports as unknown as LibflacExports;
  lib.k();
  const memory = lib.j;
  const codes = new Int32Array(memory.buffer);
  const state = { codes, words: new Uint32Array(memory.buffer), result: { samples: 0, channels: 0, codes, offsets: [] as number[], error: null } as DecodedFrame, written: false };
  // libFLAC's write callback (FLAC__StreamDecoderWriteCallback): the frame's header starts with its block size, then
  // rate, then channels (FLAC__FrameHeader); `buffer` is an array of pointers to each channel's int32 codes.
  const onWrite = (_decoder: number, frame: number, buffer: number, _client: number): number => {
    const words = views(state, memory);
    const result = state.result;
    result.samples = words[frame >> 2];
    result.channels = words[(frame + 8) >> 2];
    for (let c = 0; c < result.channels; c++) result.offsets[c] = words[(buffer >> 2) + c] >> 2;
    result.offsets.length = result.channels;
    state.written = true;
    return CONTINUE;
  };
  writeHookModule ??= new wasmApi.Module(WRITE_HOOK_BYTES);
  const hook = new wasmApi.Instance(writeHookModule, { host: { write: onWrite } }).exports.write;
  const table = lib.q;
  const slots: number[] = [];
  for (let i = 0; i < table.length; i++) {
    const f = table.get(i) as ((...args: number[]) => number) | null;
    // An exported WebAssembly function is named by its index (WebAssembly JavaScript interface, 4.4.3).
    if (f !== null && f.name === PACKAGE_WRITE_CALLBACK && f.length === 4) slots.push(i);
  }
  if (slots.length !== 1) throw new Error(`${PACKAGE_CHANGED}: its write callback (function ${PACKAGE_WRITE_CALLBACK}) is in ${slots.length} table slots, not 1`);
  table.set(slots[0], hook);
  return { lib, memory, state, cells: mallocOrThrow(lib, CELLS * 4) };
}

/** The build's heap does not grow, but a grown one would have detached the views: they are made again then. */
function views(state: LibflacInstance["state"], memory: WasmMemory): Uint32Array {
  if (state.codes.buffer !== memory.buffer) {
    state.codes = new Int32Array(memory.buffer);
    state.words = new Uint32Array(memory.buffer);
  }
  return state.words;
}

function mallocOrThrow(lib: LibflacExports, bytes: number): number {
  const ptr = lib.m(bytes);
  if (ptr === 0) throw new Error(`libFLAC's heap (fixed at the package's size) has no room for ${bytes} bytes`);
  return ptr;
}

export async function createLibflacFrames(): Promise<LibflacFrames> {
  const inst = pool.pop() ?? (await newInstance());
  const { lib, memory, state, cells } = inst;
  const cell = (i: number): number => cells + 4 * i;
  const ERROR = 6;
  const STATE = 7;
  const create = (): number => lib.n(cell(0), cell(1), cell(2), cell(3), cell(4), cell(5), cell(6), cell(7));
  let handle = create();
  // Back to the pool only if every frame decoded cleanly: a frame libFLAC stopped in may leave its input allocated.
  let clean = true;
  const text = (ptr: number): string => {
    const bytes = new Uint8Array(memory.buffer);
    let end = ptr;
    while (end < bytes.length && bytes[end] !== 0) end++;
    return String.fromCharCode(...bytes.subarray(ptr, end));
  };
  const result = state.result;

  return {
    decode(frame) {
      // Freed, its instance may be another file's now.
      if (handle === 0) throw new Error("libFLAC frames: decode() after free()");
      const words = views(state, memory);
      words[(cells >> 2) + ERROR] = 0;
      words[(cells >> 2) + STATE] = 0;
      state.written = false;
      // libFLAC's read callback frees the input once it has consumed it (the package's flac_decoder.c), so each frame gets its own.
      const input = mallocOrThrow(lib, frame.length);
      new Uint8Array(memory.buffer, input, frame.length).set(frame);
      lib.p(handle, input, frame.length);
      const after = views(state, memory);
      const errorPtr = after[(cells >> 2) + ERROR];
      const statePtr = after[(cells >> 2) + STATE];
      let error: string | null = null;
      if (errorPtr !== 0 || statePtr !== 0) {
        const parts: string[] = [];
        const e = errorPtr !== 0 ? text(errorPtr) : "";
        const s = statePtr !== 0 ? text(statePtr) : "";
        if (e) parts.push(`Error: ${e}`);
        if (s) parts.push(`State: ${s}`);
        if (parts.length > 0) error = parts.join("; ");
      }
      result.error = error;
      result.codes = state.codes;
      if (!state.written) {
        result.samples = 0;
        result.channels = 0;
        result.offsets.length = 0;
      }
      if (error !== null || !state.written) clean = false;
      return result;
    },
    restart() {
      if (handle === 0) throw new Error("libFLAC frames: restart() after free()");
      lib.o(handle);
      handle = create();
    },
    free() {
      if (handle === 0) return;
      lib.o(handle);
      handle = 0;
      if (clean && pool.length < POOLED_INSTANCES) pool.push(inst);
    },
  };
}
