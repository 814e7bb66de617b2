/**
 * fft.js's forward transforms in WebAssembly (shared/src/spectral/fftJsKernels.ts): the very bits of fft.js
 * 4.0.4 itself (npm, the independent reference here and the code the kernel follows), for every size the
 * analysers use and the small ones whose first pass differs (radix 2 or 4), on noise, tones, silence and
 * values spanning many magnitudes; its plan tables value for value, and its windowing as fft.ts's loop.
 * Bit for bit, so the fingerprint and the fine spectrum stay as they were.
 */
import FFT from "fft.js";
import { describe, expect, it } from "vitest";
import { createFftJsKernel, fftJsTables } from "../../shared/src/spectral/fftJsKernels.ts";
import { WASM_MODULE_BYTES } from "../../shared/src/spectral/fftJsKernels.generated.ts";
import { seededRandom } from "../fixtures/synth.ts";

function signal(n: number, seed: number, kind: "noise" | "tone" | "zeros" | "wide"): Float64Array {
  const random = seededRandom(seed);
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] =
      kind === "noise" ? 2 * random() - 1
      : kind === "tone" ? Math.sin((2 * Math.PI * 5.3 * i) / n) * 0.5
      : kind === "zeros" ? 0
      : (2 * random() - 1) * 10 ** (Math.floor(random() * 40) - 20);
  }
  return x;
}

const bytes = (a: Float64Array): Buffer => Buffer.from(a.buffer, a.byteOffset, a.byteLength);
/** A periodic Hann window as fft.ts makes it. */
const hann = (n: number): Float64Array => Float64Array.from({ length: n }, (_, i) => 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / n));

const SIZES = [2, 4, 8, 16, 32, 64, 128, 1024, 2048, 4096, 8192, 16384, 32768, 65536];

describe("fft.js kernels", () => {
  it("run here (WebAssembly present), so the kernel is what is compared", () => {
    expect(WebAssembly.validate(WASM_MODULE_BYTES)).toBe(true);
  });

  for (const n of SIZES) {
    it(`${n} points: the plan tables, realTransform and transform give fft.js's values`, () => {
      const plan = new FFT(n);
      const internals = plan as unknown as { table: number[]; _bitrev: number[]; _width: number };
      const tables = fftJsTables(n);
      expect(tables.width).toBe(internals._width);
      expect(Array.from(tables.bitrev)).toEqual(internals._bitrev);
      expect(Buffer.compare(bytes(tables.table), bytes(Float64Array.from(internals.table)))).toBe(0);

      const kernel = createFftJsKernel(n, hann(n));
      expect(kernel).not.toBeNull();
      for (const kind of ["noise", "tone", "zeros", "wide"] as const) {
        const real = signal(n, n + kind.length, kind);
        const expectedReal = new Float64Array(2 * n);
        plan.realTransform(expectedReal, real);
        kernel!.input.set(real);
        kernel!.realTransform();
        expect(Buffer.compare(bytes(kernel!.output), bytes(expectedReal))).toBe(0);

        const complex = signal(2 * n, 3 * n + kind.length, kind);
        const expectedComplex = new Float64Array(2 * n);
        plan.transform(expectedComplex, complex);
        kernel!.input.set(complex);
        kernel!.transform();
        expect(Buffer.compare(bytes(kernel!.output), bytes(expectedComplex))).toBe(0);
      }
      // Not trivially equal: the spectrum of noise is not its input.
      expect(kernel!.output.some((v, i) => v !== kernel!.input[i])).toBe(true);
    });
  }

  for (const n of [8, 1024, 4096]) {
    it(`${n} points: windowed float32 frames (one, and a pair) as fft.ts windows them for fft.js`, () => {
      const plan = new FFT(n);
      const window = hann(n);
      const kernel = createFftJsKernel(n, window)!;
      // Longer than the transform: only the first n samples count.
      const a = Float32Array.from(signal(n + 5, n, "noise"));
      const b = Float32Array.from(signal(n + 5, n + 1, "wide"));
      const windowed = Float64Array.from({ length: n }, (_, i) => a[i] * window[i]);
      const expectedReal = new Float64Array(2 * n);
      plan.realTransform(expectedReal, windowed);
      expect(Buffer.compare(bytes(kernel.windowedRealTransform(a)), bytes(expectedReal))).toBe(0);
      // A float64 frame takes the JavaScript loop: the same values.
      expect(Buffer.compare(bytes(kernel.windowedRealTransform(Float64Array.from(a))), bytes(expectedReal))).toBe(0);

      const pair = new Float64Array(2 * n);
      for (let i = 0; i < n; i++) {
        pair[2 * i] = a[i] * window[i];
        pair[2 * i + 1] = b[i] * window[i];
      }
      const expectedPair = new Float64Array(2 * n);
      plan.transform(expectedPair, pair);
      expect(Buffer.compare(bytes(kernel.windowedPairTransform(a, b)), bytes(expectedPair))).toBe(0);
    });
  }

  it("refuses a window of another length", () => {
    expect(() => createFftJsKernel(8, new Float64Array(4))).toThrow(/window must hold fftSize = 8 values, got 4/);
  });
});
