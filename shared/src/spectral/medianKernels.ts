/**
 * bandwidth.ts's running median in WebAssembly (medianKernels.wat, built into medianKernels.generated.ts),
 * loaded through shared/src/wasm/kernelModule.ts: a fresh instance a call (reused in a kernel arena). Null
 * where WebAssembly is missing; bandwidth.ts then runs its JavaScript, which gives the same medians
 * (tests/shared/bandwidth.test.ts).
 */
import { kernelModule } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./medianKernels.generated.ts";

const instantiate = kernelModule(WASM_MODULE_BYTES);

/** Values a window holds at most: 2·32 + 1 (bandwidth.ts's widest). */
const SORTED_VALUES = 65;

/**
 * out = a copy of levelDb with bins 0 … top replaced by their running medians (see medianKernels.wat), or null
 * where the kernel cannot run. levelDb[0 … top] must hold no NaN.
 */
export function medianSmoothKernel(levelDb: Float64Array, top: number, widen: number): Float64Array | null {
  const n = levelDb.length;
  const xAt = 0;
  const outAt = 8 * n;
  const sortedAt = 16 * n;
  const instance = instantiate(sortedAt + 8 * SORTED_VALUES);
  if (!instance) return null;
  const buffer = instance.memory.buffer;
  new Float64Array(buffer, xAt, n).set(levelDb);
  const out = new Float64Array(buffer, outAt, n);
  out.set(levelDb);
  (instance.exports.medianSmooth as (x: number, top: number, widen: number, out: number, sorted: number) => void)(xAt, top, widen, outAt, sortedAt);
  // A copy: nothing an analysis returns may point into a kernel's memory (kernelModule.ts's arenas).
  return out.slice();
}
