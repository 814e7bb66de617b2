/**
 * The fingerprint's WebAssembly loops (kernels.wat, built into kernels.generated.ts), loaded through
 * shared/src/wasm/kernelModule.ts: each user makes its own instance, with its own memory of the size it
 * needs, made so from the start and never grown (a user that needs more makes a new instance). Everything
 * they compute is bit-identical to the JavaScript they replace, which stays for hosts without WebAssembly
 * SIMD (`instantiateKernels` then returns null) and for the tests that compare the two.
 */
import { kernelModule, type WasmMemory } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./kernels.generated.ts";

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

const instantiate = kernelModule(WASM_MODULE_BYTES);

/** A fresh instance with a memory of at least `bytes`, or null where WebAssembly or its SIMD is missing. */
export function instantiateKernels(bytes: number): FingerprintKernels | null {
  const instance = instantiate(bytes);
  if (!instance) return null;
  return { ...(instance.exports as Omit<FingerprintKernels, "memory">), memory: instance.memory };
}
