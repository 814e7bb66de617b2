/**
 * PFFFT's real forward transform (single precision, WASM SIMD), instantiated synchronously from the
 * bytes embedded in pffftWasm.generated.ts the first time a plan is asked for, so neither start-up nor a
 * command that never analyses audio pays for it. Only shared/src/spectral/fft.ts uses this.
 *
 * The module is the Emscripten build shipped in @echogarden/pffft-wasm 0.4.2; its imports and exports
 * carry minified one-letter names (read from that package's dist/simd/pffft.js glue), which is why the
 * version is pinned exactly and a mismatch is an error, not a silent fallback.
 */
import { PFFFT_WASM_BASE64, PFFFT_WASM_BYTE_LENGTH, PFFFT_WASM_SOURCE } from "./pffftWasm.generated.ts";
import type { SampleFrame } from "./fft.ts";

/** pffft.h: pffft_transform_t PFFFT_REAL = 0; pffft_direction_t PFFFT_FORWARD = 0. */
const PFFFT_REAL = 0;
const PFFFT_FORWARD = 0;
/** pffft.c asserts N % (2·SIMD_SZ²) == 0 for real transforms, SIMD_SZ = 4 floats. */
export const PFFFT_REAL_SIZE_MULTIPLE = 32;
/**
 * Largest size planned in PFFFT's fixed 16 MiB heap (its three buffers and setup take about 2 MiB here):
 * larger ones go to fft.js without touching the heap, so they cannot use up the room smaller sizes need.
 */
export const PFFFT_LARGEST_REAL_SIZE = 2 ** 17;

export interface PffftRealPlan {
  readonly size: number;
  /**
   * Copies frame[0 … size) into the WASM heap as float32 and runs the forward transform. Returns the
   * heap (valid until the next call of any plan); the spectrum starts at `outputIndex` in PFFFT's ordered
   * real layout: [X₀, X_{N/2}, Re X₁, Im X₁, …, Re X_{N/2−1}, Im X_{N/2−1}] (X unnormalised, e^(−2πikn/N)).
   */
  forward(frame: SampleFrame): Float32Array;
  readonly outputIndex: number;
}

/* Just the WebAssembly API this file calls: shared/ compiles without DOM or Node typings. */
interface WasmMemory {
  readonly buffer: ArrayBuffer;
}
interface WasmApi {
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: Record<string, Record<string, unknown>>) => { exports: Record<string, unknown> };
}
interface PffftExports {
  memory: WasmMemory;
  callCtors: () => void;
  alignedMalloc: (bytes: number) => number;
  newSetup: (n: number, transform: number) => number;
  transformOrdered: (setup: number, input: number, output: number, work: number, direction: number) => void;
}

let loaded: PffftExports | null | undefined;
let heap = new Float32Array(0);
const plans = new Map<number, PffftRealPlan | null>();

/** A plan for real transforms of `size` points, or null where PFFFT cannot serve it (size, or no WASM SIMD here). */
export function pffftRealPlan(size: number): PffftRealPlan | null {
  if (size < PFFFT_REAL_SIZE_MULTIPLE || size % PFFFT_REAL_SIZE_MULTIPLE !== 0 || size > PFFFT_LARGEST_REAL_SIZE) return null;
  const cached = plans.get(size);
  if (cached !== undefined) return cached;
  const pffft = loadPffft();
  if (pffft === null) return null;
  const setup = pffft.newSetup(size, PFFFT_REAL);
  // PFFFT wants 16-byte aligned buffers. One input/output/work set per size serves every analyser of that
  // size: a call copies in, transforms and is read back before any other call (JS runs one at a time).
  const input = pffft.alignedMalloc(4 * size);
  const output = pffft.alignedMalloc(4 * size);
  const work = pffft.alignedMalloc(4 * size);
  // Out of heap (it never grows): fft.js serves this size.
  if (setup === 0 || input === 0 || output === 0 || work === 0) {
    plans.set(size, null);
    return null;
  }
  const inputIndex = input >> 2;
  const plan: PffftRealPlan = {
    size,
    outputIndex: output >> 2,
    forward(frame) {
      const h = currentHeap(pffft);
      h.set(frame.length === size ? frame : frame.subarray(0, size), inputIndex);
      pffft.transformOrdered(setup, input, output, work, PFFFT_FORWARD);
      return h;
    },
  };
  plans.set(size, plan);
  return plan;
}

/** True when this runtime runs the WASM SIMD transform (Node ≥ 16.4, current browsers); fft.js serves otherwise. */
export function pffftAvailable(): boolean {
  return loadPffft() !== null;
}

function currentHeap(pffft: PffftExports): Float32Array {
  if (heap.buffer !== pffft.memory.buffer) heap = new Float32Array(pffft.memory.buffer);
  return heap;
}

function loadPffft(): PffftExports | null {
  if (loaded !== undefined) return loaded;
  const wasm = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
  const bytes = decodeBase64(PFFFT_WASM_BASE64);
  if (bytes.length !== PFFFT_WASM_BYTE_LENGTH) {
    throw new Error(`embedded ${PFFFT_WASM_SOURCE} should be ${PFFFT_WASM_BYTE_LENGTH} bytes, decoded ${bytes.length}`);
  }
  // No WebAssembly, or one without the SIMD proposal (compiling throws): fft.js does the work. No validate()
  // first: compiling validates too (≈ 2 ms less at start-up, issue #22).
  let compiled: object;
  try {
    if (wasm === undefined) throw new Error("no WebAssembly");
    compiled = new wasm.Module(bytes);
  } catch {
    loaded = null;
    return loaded;
  }
  let memory: WasmMemory | null = null;
  const imports = {
    a: {
      // __assert_fail(condition, file, line, function): pffft asserts on sizes it cannot do.
      a: () => {
        throw new Error(`${PFFFT_WASM_SOURCE}: an internal assertion failed`);
      },
      // emscripten_resize_heap(requested bytes) → 0: the heap never grows. A grown memory detaches its old
      // buffer, and the first detached ArrayBuffer slows every later typed-array loop of the thread (see
      // DEVELOPERS.md, "A WebAssembly SIMD kernel"); the module's 16 MiB hold every plan the analysis makes,
      // and a plan that does not fit is served by fft.js instead (pffftRealPlan).
      b: () => 0,
      // _emscripten_memcpy_js(dest, src, count)
      c: (dest: number, src: number, count: number) => {
        if (memory !== null) new Uint8Array(memory.buffer).copyWithin(dest, src, src + count);
      },
    },
  };
  const instance = new wasm.Instance(compiled, imports);
  const e = instance.exports;
  // Export names from @echogarden/pffft-wasm 0.4.2's dist/simd/pffft.js: d memory, e __wasm_call_ctors,
  // f pffft_aligned_malloc, k pffft_new_setup, p pffft_transform_ordered.
  const names = { memory: "d", callCtors: "e", alignedMalloc: "f", newSetup: "k", transformOrdered: "p" } as const;
  for (const [role, name] of Object.entries(names)) {
    const value = e[name];
    const ok = role === "memory" ? typeof value === "object" && value !== null && "buffer" in value : typeof value === "function";
    if (!ok) throw new Error(`${PFFFT_WASM_SOURCE}: expected export "${name}" (${role}), found ${typeof value}`);
  }
  const exports = {
    memory: e.d as WasmMemory,
    callCtors: e.e as PffftExports["callCtors"],
    alignedMalloc: e.f as PffftExports["alignedMalloc"],
    newSetup: e.k as PffftExports["newSetup"],
    transformOrdered: e.p as PffftExports["transformOrdered"],
  };
  memory = exports.memory;
  exports.callCtors();
  loaded = exports;
  return loaded;
}

const BASE64_ALPHABET = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";

/** RFC 4648 §4 base64 (padded); written out because shared/ has neither Buffer nor a guaranteed atob. */
function decodeBase64(text: string): Uint8Array {
  // The runtime's own decoder where there is one (Node, browsers): this runs once, unoptimised, at start-up.
  const atob = (globalThis as { atob?: (data: string) => string }).atob;
  if (atob) {
    let binary: string;
    try {
      binary = atob(text);
    } catch {
      throw new Error(`embedded ${PFFFT_WASM_SOURCE}: expected base64`);
    }
    const out = new Uint8Array(binary.length);
    for (let i = 0; i < out.length; i++) out[i] = binary.charCodeAt(i);
    return out;
  }
  const value = new Int16Array(128).fill(-1);
  for (let i = 0; i < BASE64_ALPHABET.length; i++) value[BASE64_ALPHABET.charCodeAt(i)] = i;
  let end = text.length;
  while (end > 0 && text.charCodeAt(end - 1) === 61 /* = */) end--;
  const out = new Uint8Array(Math.floor((end * 6) / 8));
  let bits = 0;
  let acc = 0;
  let o = 0;
  for (let i = 0; i < end; i++) {
    const code = text.charCodeAt(i);
    const v = code < 128 ? value[code] : -1;
    if (v < 0) throw new Error(`embedded ${PFFFT_WASM_SOURCE}: expected base64, found character code ${code} at ${i}`);
    acc = ((acc << 6) | v) & 0xffffff;
    bits += 6;
    if (bits >= 8) {
      bits -= 8;
      out[o++] = (acc >> bits) & 0xff;
    }
  }
  return out;
}
