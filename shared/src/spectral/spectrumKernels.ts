/**
 * The STFT's WebAssembly SIMD kernel (spectrumKernels.wat, built into spectrumKernels.generated.ts), loaded
 * through shared/src/wasm/kernelModule.ts: an instance per set of Welch sums, its memory made at the size
 * asked for and never grown. Null where WebAssembly or its SIMD is missing; fft.ts then adds in JavaScript,
 * with the same results bit for bit (tests/shared/fft.test.ts).
 */
import { kernelModule, type WasmMemory } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./spectrumKernels.generated.ts";

export interface SpectrumKernels {
  /** At least the bytes asked for, never grown: views into it stay valid. */
  readonly memory: WasmMemory;
  /** See spectrumKernels.wat. h and sum are byte offsets into `memory`. */
  addPower(h: number, sum: number, half: number, sideScale: number, edgeScale: number): void;
  /** addPower's values stored in sum[0 … half] rather than added (amplitudeSquared's, issue #22). */
  power(h: number, sum: number, half: number, sideScale: number, edgeScale: number): void;
  /** sum[k] += x[k], mean[k] += x[k]·share for n doubles (the STFT's per-frame sums with images). */
  accumulate(x: number, sum: number, mean: number, n: number, share: number): void;
}

const instantiate = kernelModule(WASM_MODULE_BYTES);

/** A fresh (or, in a kernel arena, reused and zeroed) instance whose memory holds at least `bytes`, or null. */
export function createSpectrumKernels(bytes: number): SpectrumKernels | null {
  const instance = instantiate(bytes);
  if (!instance) return null;
  return { addPower: instance.exports.addPower as SpectrumKernels["addPower"], power: instance.exports.power as SpectrumKernels["power"], accumulate: instance.exports.accumulate as SpectrumKernels["accumulate"], memory: instance.memory };
}
