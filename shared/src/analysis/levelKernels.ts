/**
 * The level side's WebAssembly SIMD kernels (levelKernels.wat, built into levelKernels.generated.ts), loaded
 * through shared/src/wasm/kernelModule.ts: an instance per meter, with a memory of the size the meter asks
 * for, never grown (a meter that needs more makes a new instance). Null where WebAssembly or its SIMD is
 * missing; callers then run their JavaScript loops, which give the same results bit for bit
 * (tests/shared/levelKernels.test.ts).
 */
import { kernelModule, type WasmMemory } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./levelKernels.generated.ts";

export interface LevelKernels {
  /** At least the bytes asked for, never grown: views into it stay valid. */
  readonly memory: WasmMemory;
  /** See levelKernels.wat. Arguments are byte offsets into `memory` except counts, indices (n, from, s0, s1, r) and f64 values. */
  kweightPair(x: number, z: number, n: number, state: number, coefficients: number): void;
  diffChunks(x: number, count: number, chunk: number, sums: number, maxima: number): void;
  flagBits(x: number, h: number, end: number, taps: number, thresholdBits: number, ranges: number): number;
  findEqual(x: number, k: number, end: number): number;
  localBounds(x: number, ranges: number, count: number, r: number, n: number, best: number, g: number): number;
  fir12x7(x: number, s0: number, s1: number, taps: number, g: number, centre: number, centreAbs: number, out: number): void;
  rangePeak(x: number, ranges: number, count: number, out: number): void;
  windowSums(x: number, from: number, n: number, st: number): void;
  windowSumsPair(x: number, y: number, from: number, n: number, st: number): void;
}

const instantiate = kernelModule(WASM_MODULE_BYTES);

/** A fresh instance whose memory holds at least `bytes`, or null where this runtime cannot run the module. */
export function createLevelKernels(bytes: number): LevelKernels | null {
  const instance = instantiate(bytes);
  if (!instance) return null;
  return { ...(instance.exports as Omit<LevelKernels, "memory">), memory: instance.memory };
}
