import { readFileSync } from "node:fs";
import FFT from "fft.js";
import { describe, expect, it } from "vitest";
import { createSpectrumAnalyzer } from "../../shared/src/spectral/fft.ts";
import { PFFFT_LARGEST_REAL_SIZE, pffftAvailable, pffftRealPlan } from "../../shared/src/spectral/pffft.ts";
import { PFFFT_WASM_BASE64 } from "../../shared/src/spectral/pffftWasm.generated.ts";
import { pffftPackageFiles, pffftWasmModuleText } from "../../scripts/lib/pffftWasmSource.ts";
import { seededRandom, sine } from "../fixtures/synth.ts";

/**
 * The STFT's amplitude spectra come from PFFFT (single precision, WASM SIMD) with the Hann window applied
 * in frequency (shared/src/spectral/fft.ts). Checked here against outside references: a DFT summed
 * straight from its definition (Oppenheim & Schafer, Discrete-Time Signal Processing, 3rd ed., ch. 8) and,
 * where O(N²) is too slow, fft.js 4.0.4 in double precision on the time-windowed frame.
 */
function naiveWindowedPower(x: Float32Array, window: Float64Array): Float64Array {
  const n = x.length;
  const cos = new Float64Array(n);
  const sin = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    cos[j] = Math.cos((2 * Math.PI * j) / n);
    sin[j] = Math.sin((2 * Math.PI * j) / n);
  }
  const power = new Float64Array(n / 2 + 1);
  for (let k = 0; k <= n / 2; k++) {
    let re = 0;
    let im = 0;
    for (let j = 0; j < n; j++) {
      // e^(−2πi·kj/N) with the angle reduced mod N, so the twiddles stay exact for large kj.
      const t = (k * j) % n;
      const v = x[j] * window[j];
      re += v * cos[t];
      im -= v * sin[t];
    }
    power[k] = re * re + im * im;
  }
  return power;
}

function fftJsWindowedPower(x: Float32Array, window: Float64Array): Float64Array {
  const n = x.length;
  const f = new FFT(n);
  const windowed = new Float64Array(n);
  for (let j = 0; j < n; j++) windowed[j] = x[j] * window[j];
  const out = new Float64Array(2 * n);
  f.realTransform(out, windowed);
  const power = new Float64Array(n / 2 + 1);
  for (let k = 0; k <= n / 2; k++) power[k] = out[2 * k] ** 2 + out[2 * k + 1] ** 2;
  return power;
}

/** amplitudeSquared's scaling undone: raw |X_w[k]|². */
function rawPower(n: number, frame: Float32Array): Float64Array {
  const a = createSpectrumAnalyzer(n);
  expect(a.engine).toBe("pffft-wasm-simd");
  const out = new Float64Array(a.binCount);
  a.amplitudeSquared(frame, out);
  const sideScale = 4 / a.windowSum ** 2;
  const edgeScale = 1 / a.windowSum ** 2;
  return out.map((v, k) => v / (k === 0 || k === n / 2 ? edgeScale : sideScale));
}

/** Worst |amplitude error| over all bins, relative to the strongest bin's amplitude. */
function worstRelativeAmplitudeError(got: Float64Array, reference: Float64Array): number {
  let peak = 0;
  let worst = 0;
  for (let k = 0; k < reference.length; k++) peak = Math.max(peak, Math.sqrt(reference[k]));
  for (let k = 0; k < reference.length; k++) worst = Math.max(worst, Math.abs(Math.sqrt(got[k]) - Math.sqrt(reference[k])));
  return worst / peak;
}

function noiseFrame(n: number, seed: number): Float32Array {
  const rnd = seededRandom(seed);
  const x = new Float32Array(n);
  for (let i = 0; i < n; i++) x[i] = 2 * rnd() - 1;
  return x;
}

/**
 * Single precision rounds each operation to u = 2⁻²⁴ ≈ 6e-8; an FFT's error grows about as u·log₂N
 * (≈ 7e-7 at 4096 points, worst bin a few times the rms; Oppenheim & Schafer ch. 9, from memory).
 * 1e-6 of the peak amplitude is −120 dB (measured: ≤ 1.6e-7): any mistake in the window, the layout or the scaling is
 * orders of magnitude larger (a missing window alone is ≈ 1e-1).
 */
const SINGLE_PRECISION_TOLERANCE = 1e-6;

describe("PFFFT amplitude spectra (WASM SIMD)", () => {
  it("runs here: Node has WebAssembly SIMD, so the STFT does not silently fall back to fft.js", () => {
    expect(pffftAvailable()).toBe(true);
    expect(createSpectrumAnalyzer(2048).engine).toBe("pffft-wasm-simd");
  });

  it.each([2, 8, 16])("leaves sizes PFFFT cannot do (N = %i) to fft.js", (n) => {
    expect(pffftRealPlan(n)).toBeNull();
    expect(createSpectrumAnalyzer(n).engine).toBe("fft.js");
  });

  it("never grows its heap: sizes beyond what its 16 MiB hold go to fft.js and PFFFT keeps working", () => {
    // 2^22 points would need three 16 MiB buffers. Growing the heap would detach the old buffer and slow
    // every later typed-array loop of the thread (DEVELOPERS.md, "A WebAssembly SIMD kernel").
    expect(pffftRealPlan(2 ** 22)).toBeNull();
    expect(pffftRealPlan(PFFFT_LARGEST_REAL_SIZE)).not.toBeNull();
    expect(createSpectrumAnalyzer(2 ** 22).engine).toBe("fft.js");
    const n = 2048;
    const x = noiseFrame(n, 77);
    const viaPffft = createSpectrumAnalyzer(n);
    expect(viaPffft.engine).toBe("pffft-wasm-simd");
    const a = new Float64Array(n / 2 + 1);
    const b = new Float64Array(n / 2 + 1);
    viaPffft.amplitudeSquared(x, a);
    createSpectrumAnalyzer(n, { engine: "fft.js" }).amplitudeSquared(x, b);
    const peak = Math.max(...b);
    for (let k = 0; k < a.length; k++) expect(Math.abs(a[k] - b[k])).toBeLessThan(SINGLE_PRECISION_TOLERANCE * peak);
  });

  it.each([32, 64, 128, 512, 2048, 4096])("matches a naive DFT of the time-windowed frame on noise (N = %i)", (n) => {
    const x = noiseFrame(n, 31 * n);
    const a = createSpectrumAnalyzer(n);
    expect(worstRelativeAmplitudeError(rawPower(n, x), naiveWindowedPower(x, a.window))).toBeLessThan(SINGLE_PRECISION_TOLERANCE);
  });

  it("matches a naive DFT on a tone between bins plus a quiet tone, where the window's sidelobes matter", () => {
    const n = 1024;
    const loud = sine({ frequencyHz: (37.3 * 48000) / n, sampleRateHz: 48000, seconds: n / 48000 });
    const quiet = sine({ frequencyHz: (300.6 * 48000) / n, sampleRateHz: 48000, seconds: n / 48000, peakDbfs: -60 });
    const x = new Float32Array(n).map((_, i) => loud[i] + quiet[i]);
    const a = createSpectrumAnalyzer(n);
    const reference = naiveWindowedPower(x, a.window);
    const got = rawPower(n, x);
    expect(worstRelativeAmplitudeError(got, reference)).toBeLessThan(SINGLE_PRECISION_TOLERANCE);
    // The −60 dB tone reads within 0.01 dB of the double-precision DFT.
    expect(10 * Math.log10(got[300] / reference[300])).toBeCloseTo(0, 2);
  });

  it.each([8192, 65536])("matches fft.js's double-precision transform of the windowed frame (N = %i)", (n) => {
    const x = noiseFrame(n, n + 5);
    const a = createSpectrumAnalyzer(n);
    expect(worstRelativeAmplitudeError(rawPower(n, x), fftJsWindowedPower(x, a.window))).toBeLessThan(SINGLE_PRECISION_TOLERANCE);
  });

  it("reads only the frame's first fftSize samples and gives the same spectrum for a longer frame", () => {
    const n = 256;
    const long = noiseFrame(3 * n, 9);
    const a = createSpectrumAnalyzer(n);
    const fromLong = new Float64Array(a.binCount);
    const fromExact = new Float64Array(a.binCount);
    a.amplitudeSquared(long, fromLong);
    a.amplitudeSquared(long.slice(0, n), fromExact);
    expect(Array.from(fromLong)).toEqual(Array.from(fromExact));
  });

  it("keeps analysers of the same size independent though they share one heap buffer", () => {
    const n = 512;
    const a = createSpectrumAnalyzer(n);
    const b = createSpectrumAnalyzer(n);
    const x = noiseFrame(n, 1);
    const y = noiseFrame(n, 2);
    const ax = new Float64Array(a.binCount);
    const by = new Float64Array(a.binCount);
    a.amplitudeSquared(x, ax);
    b.amplitudeSquared(y, by);
    const again = new Float64Array(a.binCount);
    a.amplitudeSquared(x, again);
    expect(Array.from(again)).toEqual(Array.from(ax));
    expect(worstRelativeAmplitudeError(by, naiveWindowedPower(y, a.window).map((v, k) => v * (k === 0 || k === n / 2 ? 1 : 4) / a.windowSum ** 2))).toBeLessThan(SINGLE_PRECISION_TOLERANCE);
  });

  it("reads digital silence as exactly zero in every bin", () => {
    const a = createSpectrumAnalyzer(2048);
    const out = new Float64Array(a.binCount).fill(1);
    a.amplitudeSquared(new Float32Array(2048), out);
    expect(out.every((v) => v === 0)).toBe(true);
  });

  it("embeds exactly the pinned package's dist/simd/pffft.wasm (else run scripts/generate-pffft-wasm.ts)", () => {
    const files = pffftPackageFiles();
    const wasm = readFileSync(files.wasm);
    expect(Buffer.from(PFFFT_WASM_BASE64, "base64").equals(wasm)).toBe(true);
    const committed = readFileSync(new URL("../../shared/src/spectral/pffftWasm.generated.ts", import.meta.url), "utf8");
    expect(committed).toBe(pffftWasmModuleText(wasm, readFileSync(files.licence, "utf8"), files.version));
  });
});
