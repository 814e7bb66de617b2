/**
 * The low-rate decimator's WebAssembly kernel (decimatorKernels.wat, built into
 * decimatorKernels.generated.ts), loaded through shared/src/wasm/kernelModule.ts: an instance per decimator,
 * whose memory holds the taps, the staged block and the outputs. Null where WebAssembly is missing; the
 * decimator then runs its JavaScript loops, which give the same outputs bit for bit
 * (tests/shared/decimator.test.ts).
 */
import { kernelModule, type WasmMemory } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./decimatorKernels.generated.ts";

export interface DecimatorKernels {
  /** At least the bytes asked for, never grown: views into it stay valid. */
  readonly memory: WasmMemory;
  /** See decimatorKernels.wat. x, taps and out are byte offsets into `memory`. */
  fir(x: number, step: number, count: number, taps: number, tapCount: number, out: number): void;
}

const instantiate = kernelModule(WASM_MODULE_BYTES);

/** An instance whose memory holds at least `bytes`, or null where this runtime cannot run the module. */
export function createDecimatorKernels(bytes: number): DecimatorKernels | null {
  const instance = instantiate(bytes);
  if (!instance) return null;
  return { fir: instance.exports.fir as DecimatorKernels["fir"], memory: instance.memory };
}
