/**
 * fft.js's forward transforms in WebAssembly (fftJsKernels.wat), bit for bit fft.js's own results
 * (tests/shared/fftJsKernels.test.ts): the double-precision spectra (the fingerprint's pair spectra, the fine
 * spectrum) run a few dozen transforms a file, which V8 never optimises before a short file is done, and
 * then optimises at a cost a short file never earns back (issue #22). The kernel works from fft.js's cosine
 * table and bit-reversal pattern, computed here as fft.js 4.0.4's constructor computes them (the test
 * compares them with fft.js's own, value for value), once a size for the process; the windowing loops run in
 * the kernel too. Null where WebAssembly is missing: fft.ts then calls fft.js. Only fft.ts imports this.
 */
import { kernelModule } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./fftJsKernels.generated.ts";

const instantiate = kernelModule(WASM_MODULE_BYTES);

export interface FftJsKernel {
  /**
   * The input `realTransform()` and `transform()` read: `fftSize` reals, or 2·fftSize interleaved complex
   * values. A view of the kernel's memory.
   */
  readonly input: Float64Array;
  /** 2·fftSize interleaved values, written whole by either transform, as fft.js writes its `out`. A view too. */
  readonly output: Float64Array;
  /** fft.js's realTransform(output, input): the left half of the spectrum. */
  realTransform(): void;
  /** fft.js's transform(output, input). */
  transform(): void;
  /** The window times `frame` (its first fftSize samples) into `input`, then realTransform(); returns `output`. */
  windowedRealTransform(frame: Float32Array | Float64Array): Float64Array;
  /** The window times `a` and `b` interleaved into `input` (a real, b imaginary), then transform(); returns `output`. */
  windowedPairTransform(a: Float32Array | Float64Array, b: Float32Array | Float64Array): Float64Array;
}

/** fft.js 4.0.4's plan tables for `size` points: `table`, `_bitrev` and `_width` as its constructor makes them. */
export interface FftJsTables {
  table: Float64Array;
  bitrev: Int32Array;
  width: number;
}

interface KernelExports {
  transform(out: number, data: number, table: number, bitrev: number, size: number, width: number): void;
  realTransform(out: number, data: number, table: number, bitrev: number, size: number, width: number): void;
  windowReal(frame: number, window: number, n: number, out: number): void;
  windowPair(a: number, b: number, window: number, n: number, out: number): void;
}

const tablesBySize = new Map<number, FftJsTables>();
/** Sizes kept for the process (a custom profile's larger ones are made for their kernel alone), as fft.ts keeps plans. */
const CACHED_MAX_SIZE = 65536;

/** fft.js's constructor (lib/fft.js of 4.0.4), its expressions as they are, into typed arrays. */
export function fftJsTables(size: number): FftJsTables {
  const known = tablesBySize.get(size);
  if (known) return known;
  if (!Number.isInteger(size) || size <= 1 || (size & (size - 1)) !== 0) throw new Error(`FFT size must be a power of two > 1, got ${size}`);
  const table = new Float64Array(size * 2);
  for (let i = 0; i < table.length; i += 2) {
    const angle = (Math.PI * i) / size;
    table[i] = Math.cos(angle);
    table[i + 1] = -Math.sin(angle);
  }
  let power = 0;
  for (let t = 1; size > t; t <<= 1) power++;
  // Full radix 4 starts at len 8, otherwise at len 4.
  const width = power % 2 === 0 ? power - 1 : power;
  const bitrev = new Int32Array(1 << width);
  for (let j = 0; j < bitrev.length; j++) {
    for (let shift = 0; shift < width; shift += 2) {
      const revShift = width - shift - 2;
      bitrev[j] |= ((j >>> shift) & 3) << revShift;
    }
  }
  const made = { table, bitrev, width };
  if (size <= CACHED_MAX_SIZE) tablesBySize.set(size, made);
  return made;
}

/** A kernel for `fftSize` points windowed by `window` (fftSize values), or null where WebAssembly is missing. */
export function createFftJsKernel(fftSize: number, window: Float64Array): FftJsKernel | null {
  if (window.length !== fftSize) throw new Error(`window must hold fftSize = ${fftSize} values, got ${window.length}`);
  const { table, bitrev, width } = fftJsTables(fftSize);
  const csize = 2 * fftSize;
  const tableAt = 0;
  const windowAt = tableAt + 8 * csize;
  const inputAt = windowAt + 8 * fftSize;
  const outputAt = inputAt + 8 * csize;
  const aAt = outputAt + 8 * csize;
  const bAt = aAt + 4 * fftSize;
  const bitrevAt = bAt + 4 * fftSize;
  const instance = instantiate(bitrevAt + 4 * bitrev.length);
  if (!instance) return null;
  const buffer = instance.memory.buffer;
  new Float64Array(buffer, tableAt, csize).set(table);
  new Float64Array(buffer, windowAt, fftSize).set(window);
  new Int32Array(buffer, bitrevAt, bitrev.length).set(bitrev);
  const a = new Float32Array(buffer, aAt, fftSize);
  const b = new Float32Array(buffer, bAt, fftSize);
  const input = new Float64Array(buffer, inputAt, csize);
  const output = new Float64Array(buffer, outputAt, csize);
  const k = instance.exports as unknown as KernelExports;
  const realTransform = (): void => k.realTransform(outputAt, inputAt, tableAt, bitrevAt, csize, width);
  const transform = (): void => k.transform(outputAt, inputAt, tableAt, bitrevAt, csize, width);
  return {
    input,
    output,
    realTransform,
    transform,
    windowedRealTransform(frame) {
      if (frame instanceof Float32Array) {
        a.set(frame.length === fftSize ? frame : frame.subarray(0, fftSize));
        k.windowReal(aAt, windowAt, fftSize, inputAt);
      } else {
        for (let n = 0; n < fftSize; n++) input[n] = frame[n] * window[n];
      }
      realTransform();
      return output;
    },
    windowedPairTransform(x, y) {
      if (x instanceof Float32Array && y instanceof Float32Array) {
        a.set(x.length === fftSize ? x : x.subarray(0, fftSize));
        b.set(y.length === fftSize ? y : y.subarray(0, fftSize));
        k.windowPair(aAt, bAt, windowAt, fftSize, inputAt);
      } else {
        for (let n = 0; n < fftSize; n++) {
          input[2 * n] = x[n] * window[n];
          input[2 * n + 1] = y[n] * window[n];
        }
      }
      transform();
      return output;
    },
  };
}
