/**
 * fft.js's forward transforms in WebAssembly (fftJsKernels.wat), bit for bit fft.js's own results
 * (tests/shared/fftJsKernels.test.ts): the double-precision spectra (the fingerprint's pair spectra, the fine
 * spectrum) run a few dozen transforms a file, which V8 never optimises before a short file is done (issue
 * #22). The kernel works from the plan's own cosine table and bit-reversal pattern, copied into its memory,
 * so it can only differ from fft.js where the code does; the plan's internals (`table`, `_bitrev`, `_width`,
 * `_csize` of the pinned 4.0.4) are checked, and any other shape gets null: fft.ts then calls fft.js.
 * Null too where WebAssembly is missing. Only fft.ts imports this.
 */
import type FFT from "fft.js";
import { kernelModule } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./fftJsKernels.generated.ts";

const instantiate = kernelModule(WASM_MODULE_BYTES);

export interface FftJsKernel {
  /**
   * The input the next call reads: `fftSize` reals for realTransform, 2·fftSize interleaved complex values
   * for transform. A view of the kernel's memory.
   */
  readonly input: Float64Array;
  /** 2·fftSize interleaved values, written whole by either call, as fft.js writes its `out`. A view too. */
  readonly output: Float64Array;
  /** fft.js's realTransform(output, input): the left half of the spectrum. */
  realTransform(): void;
  /** fft.js's transform(output, input). */
  transform(): void;
}

interface PlanInternals {
  size: number;
  _csize: number;
  _width: number;
  table: ArrayLike<number>;
  _bitrev: ArrayLike<number>;
}

interface KernelExports {
  transform(out: number, data: number, table: number, bitrev: number, size: number, width: number): void;
  realTransform(out: number, data: number, table: number, bitrev: number, size: number, width: number): void;
}

function internalsOf(plan: FFT): PlanInternals | null {
  const p = plan as unknown as Partial<PlanInternals>;
  const size = p.size;
  if (typeof size !== "number" || !Number.isInteger(size) || size < 2 || p._csize !== 2 * size) return null;
  if (typeof p._width !== "number" || !Number.isInteger(p._width) || p._width < 1 || p._width > 30) return null;
  if (!p.table || p.table.length !== 2 * size || !p._bitrev || p._bitrev.length !== 1 << p._width) return null;
  return p as PlanInternals;
}

/** A kernel for `plan`'s size, or null (WebAssembly missing, or a plan not shaped as fft.js 4.0.4's). */
export function createFftJsKernel(plan: FFT): FftJsKernel | null {
  const internals = internalsOf(plan);
  if (internals === null) return null;
  const { _csize: csize, _width: width } = internals;
  const tableAt = 0;
  const bitrevAt = tableAt + 8 * csize;
  const inputAt = Math.ceil((bitrevAt + 4 * internals._bitrev.length) / 8) * 8;
  const outputAt = inputAt + 8 * csize;
  const instance = instantiate(outputAt + 8 * csize);
  if (!instance) return null;
  const buffer = instance.memory.buffer;
  new Float64Array(buffer, tableAt, csize).set(internals.table);
  new Int32Array(buffer, bitrevAt, internals._bitrev.length).set(internals._bitrev);
  const k = instance.exports as unknown as KernelExports;
  return {
    input: new Float64Array(buffer, inputAt, csize),
    output: new Float64Array(buffer, outputAt, csize),
    realTransform: () => k.realTransform(outputAt, inputAt, tableAt, bitrevAt, csize, width),
    transform: () => k.transform(outputAt, inputAt, tableAt, bitrevAt, csize, width),
  };
}
