/**
 * fft.js's forward transforms in WebAssembly (shared/src/spectral/fftJsKernels.ts): the very bits of fft.js
 * 4.0.4 itself (npm, the independent reference here and the code the kernel follows), for every size the
 * analysers use and the small ones whose first pass differs (radix 2 or 4), on noise, tones, silence and
 * values spanning many magnitudes. Bit for bit, so the fingerprint and the fine spectrum stay as they were.
 */
import FFT from "fft.js";
import { describe, expect, it } from "vitest";
import { createFftJsKernel } from "../../shared/src/spectral/fftJsKernels.ts";
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

describe("fft.js kernels", () => {
  it("run here (WebAssembly present), so the kernel is what is compared", () => {
    expect(WebAssembly.validate(WASM_MODULE_BYTES)).toBe(true);
  });

  for (const n of [2, 4, 8, 16, 32, 64, 128, 1024, 2048, 4096, 8192, 16384, 32768, 65536]) {
    it(`${n} points: realTransform and transform give fft.js's bits`, () => {
      const plan = new FFT(n);
      const kernel = createFftJsKernel(plan);
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

  it("declines a plan not shaped as fft.js 4.0.4's", () => {
    expect(createFftJsKernel({ size: 8 } as unknown as FFT)).toBeNull();
  });
});
