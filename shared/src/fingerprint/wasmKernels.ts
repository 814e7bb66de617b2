/**
 * The fingerprint's WebAssembly loops (kernels.wat, built into kernels.generated.ts), compiled once
 * per process; each user makes its own instance, with its own memory of the size it needs, made so
 * from the start: a memory.grow() would detach the old buffer, and the first detached ArrayBuffer in
 * a process makes V8 check every typed-array access of all later optimised code for detachment (it
 * slowed the level side's loops by about 10 %). A user that needs more makes a new instance. Everything they compute is
 * bit-identical to the JavaScript they replace, which stays for hosts without WebAssembly SIMD
 * (`instantiateKernels` then returns null) and for the tests that compare the two.
 */
import { FINGERPRINT_KERNELS_WASM } from "./kernels.generated.ts";

// shared/ is built without DOM or Node typings: just what is used of the WebAssembly global.
export interface WasmMemory {
  readonly buffer: ArrayBuffer;
}
export interface FingerprintKernels {
  /** The instance's memory, never grown: views into it stay valid. */
  memory: WasmMemory;
  plan(index: number, ratio: number, limit: number, origin: number, available: number, lead: number, width: number, phases: number, schedule: number, capacity: number): number;
  pair(left: number, right: number, kernel: number, schedule: number, count: number, outLeft: number, outRight: number, width: number): void;
  single(input: number, kernel: number, schedule: number, count: number, out: number, width: number): void;
  rowMax(src: number, work: number, out: number, length: number, radius: number, size: number): number;
  candidates(row: number, max: number, bins: number, floor: number, out: number): number;
  halvePair(inLeft: number, inRight: number, pairs: number, outLeft: number, outRight: number, state: number): void;
  halveSingle(input: number, pairs: number, out: number, state: number): void;
}
interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports?: object) => { exports: unknown };
  Memory: new (descriptor: { initial: number }) => WasmMemory;
}

export const WASM_PAGE_BYTES = 65536;

let compiled: object | null | undefined;

/** A fresh instance with a memory of at least `bytes`, or null where WebAssembly or its SIMD is missing. */
export function instantiateKernels(bytes: number): FingerprintKernels | null {
  const api = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
  if (compiled === undefined) {
    try {
      compiled = api && api.validate(FINGERPRINT_KERNELS_WASM) ? new api.Module(FINGERPRINT_KERNELS_WASM) : null;
    } catch {
      compiled = null;
    }
  }
  if (!compiled || !api) return null;
  const memory = new api.Memory({ initial: Math.max(1, Math.ceil(bytes / WASM_PAGE_BYTES)) });
  const exports = new api.Instance(compiled, { env: { memory } }).exports as Omit<FingerprintKernels, "memory">;
  return { ...exports, memory } as FingerprintKernels;
}
