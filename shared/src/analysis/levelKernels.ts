/**
 * The level side's WebAssembly SIMD kernels (levelKernels.wat, inlined as levelKernels.generated.ts): an
 * instance with its own memory per meter. Null where WebAssembly or its SIMD is missing; callers then run
 * their JavaScript loops, which give the same results bit for bit (tests/shared/levelKernels.test.ts).
 */
import { LEVEL_KERNELS_BASE64 } from "./levelKernels.generated.ts";

/** The little of the WebAssembly JS API used here (shared/ is built without DOM or Node types). */
interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports?: object) => { exports: Record<string, unknown> };
}

export interface LevelKernels {
  readonly memory: WasmMemory;
  /** See levelKernels.wat. All arguments are byte offsets into `memory` except n (frames). */
  kweightPair(x: number, z: number, n: number, state: number, coefficients: number): void;
  diffChunks(x: number, count: number, chunk: number, sums: number, maxima: number): void;
  flagBits(x: number, h: number, end: number, taps: number, thresholdBits: number, ranges: number): number;
  findEqual(x: number, k: number, end: number): number;
  localBounds(x: number, ranges: number, count: number, r: number, n: number, best: number, g: number): number;
}

const PAGE_BYTES = 65536;
let compiled: object | null | undefined;

function decodeBase64(text: string): Uint8Array {
  const alphabet = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  const value = new Int16Array(128).fill(-1);
  for (let i = 0; i < alphabet.length; i++) value[alphabet.charCodeAt(i)] = i;
  const clean = text.replace(/=+$/, "");
  const out = new Uint8Array(Math.floor((clean.length * 6) / 8));
  let bits = 0;
  let acc = 0;
  let o = 0;
  for (let i = 0; i < clean.length; i++) {
    const v = value[clean.charCodeAt(i)];
    if (v < 0) throw new Error(`level kernels: invalid base64 character at ${i}`);
    acc = (acc << 6) | v;
    bits += 6;
    if (bits >= 8) {
      bits -= 8;
      out[o++] = (acc >> bits) & 0xff;
    }
  }
  return out;
}

/**
 * A fresh instance, or null where this runtime cannot run the module (no WebAssembly or no SIMD, a content
 * security policy without 'wasm-unsafe-eval', no address space left for another memory): the callers'
 * JavaScript loops give the same results, only slower.
 */
export function createLevelKernels(): LevelKernels | null {
  const api = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
  if (!api) return null;
  let exports: Record<string, unknown>;
  try {
    if (compiled === undefined) {
      const bytes = decodeBase64(LEVEL_KERNELS_BASE64);
      compiled = api.validate(bytes) ? new api.Module(bytes) : null;
    }
    if (compiled === null) return null;
    exports = new api.Instance(compiled).exports;
  } catch {
    return null;
  }
  return {
    memory: exports.memory as WasmMemory,
    kweightPair: exports.kweightPair as LevelKernels["kweightPair"],
    diffChunks: exports.diffChunks as LevelKernels["diffChunks"],
    flagBits: exports.flagBits as LevelKernels["flagBits"],
    findEqual: exports.findEqual as LevelKernels["findEqual"],
    localBounds: exports.localBounds as LevelKernels["localBounds"],
  };
}

/** Grows `kernels`' memory to at least `bytes`; true when it grew (typed-array views must then be remade). */
export function ensureKernelMemory(kernels: LevelKernels, bytes: number): boolean {
  const have = kernels.memory.buffer.byteLength;
  if (have >= bytes) return false;
  kernels.memory.grow(Math.ceil((bytes - have) / PAGE_BYTES));
  return true;
}
