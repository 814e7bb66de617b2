/**
 * The fingerprint's WebAssembly loops (kernels.wat, built into kernels.generated.ts), compiled once
 * per process; each user makes its own instance, with its own memory. Everything they compute is
 * bit-identical to the JavaScript they replace, which stays for hosts without WebAssembly SIMD
 * (`instantiateKernels` then returns null) and for the tests that compare the two.
 */
import { FINGERPRINT_KERNELS_WASM } from "./kernels.generated.ts";

// shared/ is built without DOM or Node typings: just what is used of the WebAssembly global.
export interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
export interface FingerprintKernels {
  memory: WasmMemory;
  plan(index: number, ratio: number, limit: number, origin: number, available: number, lead: number, width: number, phases: number, schedule: number, capacity: number): number;
  pair(left: number, right: number, kernel: number, schedule: number, count: number, outLeft: number, outRight: number, width: number): void;
  single(input: number, kernel: number, schedule: number, count: number, out: number, width: number): void;
  rowMax(src: number, work: number, out: number, length: number, radius: number, size: number): number;
  candidates(row: number, max: number, bins: number, floor: number, out: number): number;
}
interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports?: object) => { exports: unknown };
}

export const WASM_PAGE_BYTES = 65536;

let compiled: object | null | undefined;

/** A fresh instance, or null where WebAssembly or its SIMD is missing. */
export function instantiateKernels(): FingerprintKernels | null {
  const api = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
  if (compiled === undefined) {
    try {
      compiled = api && api.validate(FINGERPRINT_KERNELS_WASM) ? new api.Module(FINGERPRINT_KERNELS_WASM) : null;
    } catch {
      compiled = null;
    }
  }
  return compiled && api ? (new api.Instance(compiled, {}).exports as FingerprintKernels) : null;
}

/** Grows `memory` to at least `bytes`. */
export function reserveBytes(memory: WasmMemory, bytes: number): void {
  const have = memory.buffer.byteLength;
  if (bytes > have) memory.grow(Math.ceil((bytes - have) / WASM_PAGE_BYTES));
}
