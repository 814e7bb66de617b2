import { describe, expect, it } from "vitest";
import { createSpectrumAnalyzer } from "../../shared/src/spectral/fft.ts";
import { createSpectrumKernels } from "../../shared/src/spectral/spectrumKernels.ts";
import { seededRandom, sine } from "../fixtures/synth.ts";

/**
 * X_k = Σ_n x_n·e^(−2πi·kn/N), straight from the definition of the DFT (Oppenheim & Schafer,
 * Discrete-Time Signal Processing, 3rd ed., ch. 8), O(N²). The angle is reduced mod N first so
 * the twiddles stay exact for large kn.
 */
function naiveDft(x: Float64Array): { re: Float64Array; im: Float64Array } {
  const n = x.length;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    let sr = 0;
    let si = 0;
    for (let j = 0; j < n; j++) {
      const angle = (-2 * Math.PI * ((k * j) % n)) / n;
      sr += x[j] * Math.cos(angle);
      si += x[j] * Math.sin(angle);
    }
    re[k] = sr;
    im[k] = si;
  }
  return { re, im };
}

function randomFrame(n: number, seed: number): Float64Array {
  const rnd = seededRandom(seed);
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) x[i] = 2 * rnd() - 1;
  return x;
}

describe("createSpectrumAnalyzer", () => {
  it.each([2, 4, 8, 16, 64, 256, 1024])("matches a naive DFT of the windowed frame to 1e-9 relative (N = %i)", (n) => {
    const a = createSpectrumAnalyzer(n);
    const x = randomFrame(n, n);
    const windowed = new Float64Array(n);
    for (let i = 0; i < n; i++) windowed[i] = x[i] * a.window[i];
    const reference = naiveDft(windowed);
    const out = new Float64Array(2 * n);
    a.spectrum(x, out);
    let peak = 0;
    for (let k = 0; k <= n / 2; k++) peak = Math.max(peak, Math.hypot(reference.re[k], reference.im[k]));
    let worst = 0;
    for (let k = 0; k <= n / 2; k++) {
      worst = Math.max(worst, Math.hypot(out[2 * k] - reference.re[k], out[2 * k + 1] - reference.im[k]));
    }
    // Definition of the DFT (above); tolerance from issue #4.
    expect(worst / peak).toBeLessThan(1e-9);
  });

  it.each([256, 2048])("keeps Parseval's relation for windowed frames (N = %i)", (n) => {
    const a = createSpectrumAnalyzer(n);
    const x = randomFrame(n, 7 * n);
    let timeEnergy = 0;
    for (let i = 0; i < n; i++) timeEnergy += (x[i] * a.window[i]) ** 2;
    const out = new Float64Array(2 * n);
    a.spectrum(x, out);
    // Parseval's relation for the DFT: Σ|x_n|² = (1/N)·Σ|X_k|², with the real signal's mirrored bins
    // counted twice (Oppenheim & Schafer, 3rd ed., ch. 8; table entry from memory).
    let frequencyEnergy = out[0] ** 2 + out[n] ** 2 + out[n + 1] ** 2;
    for (let k = 1; k < n / 2; k++) frequencyEnergy += 2 * (out[2 * k] ** 2 + out[2 * k + 1] ** 2);
    frequencyEnergy /= n;
    expect(frequencyEnergy / timeEnergy).toBeCloseTo(1, 10);
  });

  it("reads a full-scale sine centred on a bin as 0 dBFS there", () => {
    const n = 2048;
    const a = createSpectrumAnalyzer(n);
    const bin = 100;
    const x = sine({ frequencyHz: (bin * 48000) / n, sampleRateHz: 48000, seconds: n / 48000, phaseRadians: 0.3 });
    const db = new Float64Array(a.binCount);
    a.magnitudeDb(x, db);
    // Hann coherent gain 0.5, corrected by 2/Σw (Harris 1978, "On the use of windows…", Table 1).
    expect(db[bin]).toBeCloseTo(0, 2);
    // Its neighbours are the Hann mainlobe's −6.02 dB (the window's spectrum at ±1 bin is half its peak; Harris 1978).
    expect(db[bin + 1]).toBeCloseTo(-6.02, 1);
  });

  it("shows the Hann scalloping loss of 1.42 dB half a bin off centre", () => {
    const n = 2048;
    const a = createSpectrumAnalyzer(n);
    const x = sine({ frequencyHz: (100.5 * 48000) / n, sampleRateHz: 48000, seconds: n / 48000 });
    const db = new Float64Array(a.binCount);
    a.magnitudeDb(x, db);
    // Harris 1978, Table 1: Hann scalloping loss 1.42 dB.
    expect(Math.max(db[100], db[101])).toBeCloseTo(-1.42, 1);
  });

  it("has the Hann window's equivalent noise bandwidth of 1.5 bins", () => {
    // Harris 1978, Table 1: ENBW 1.50 bins.
    expect(createSpectrumAnalyzer(4096).noiseBandwidthBins).toBeCloseTo(1.5, 6);
  });

  it.each([1000, 1, 0, -4, 3.5])("rejects fftSize %s with a message naming it", (n) => {
    expect(() => createSpectrumAnalyzer(n)).toThrow(new RegExp(`power of two > 1, got ${n}`));
  });

  // The Welch sums of a scan without images add each frame's spectrum in one pass (issue #22): the sum must hold
  // exactly the doubles that amplitudeSquared gives, added in the same order, on either engine.
  it.each([["auto", 2048], ["fft.js", 2048], ["auto", 64]] as const)("adds amplitudeSquared to a sum bit for bit (%s, N = %i)", (engine, n) => {
    const a = createSpectrumAnalyzer(n, { engine });
    const expected = new Float64Array(a.binCount);
    const sum = new Float64Array(a.binCount);
    const spectrum = new Float64Array(a.binCount);
    for (let frame = 0; frame < 3; frame++) {
      const x = Float32Array.from(randomFrame(n, 100 + frame));
      a.amplitudeSquared(x, spectrum);
      for (let k = 0; k < a.binCount; k++) expected[k] += spectrum[k];
      a.addAmplitudeSquared(x, sum);
    }
    expect(sum.some((v) => v > 0)).toBe(true);
    expect(Array.from(sum)).toEqual(Array.from(expected));
    expect(() => a.addAmplitudeSquared(new Float32Array(n), new Float64Array(a.binCount - 1))).toThrow(/binCount/);
  });

  // A scan without images keeps its Welch sums in a WebAssembly SIMD kernel's memory (spectrumKernels.wat):
  // the same doubles as adding amplitudeSquared in JavaScript, channel by channel.
  it.each([["auto", 2048, 2], ["auto", 32, 1], ["auto", 4096, 3], ["fft.js", 1024, 2]] as const)("keeps Welch sums bit for bit (%s, N = %i, %i channels)", (engine, n, channels) => {
    const a = createSpectrumAnalyzer(n, { engine });
    const sums = a.powerSums(channels);
    const expected = Array.from({ length: channels }, () => new Float64Array(a.binCount));
    const spectrum = new Float64Array(a.binCount);
    for (let frame = 0; frame < 4; frame++) {
      for (let c = 0; c < channels; c++) {
        // Loud, quiet and a tone: far apart in level, so a rounding slip would show.
        const x = Float32Array.from(randomFrame(n, 1000 * frame + c), (v, i) => (c === 1 ? 1e-4 * v : c === 2 ? Math.sin(0.3 * i) : v));
        a.amplitudeSquared(x, spectrum);
        for (let k = 0; k < a.binCount; k++) expected[c][k] += spectrum[k];
        sums.add(c, x);
      }
    }
    for (let c = 0; c < channels; c++) {
      const out = new Float64Array(a.binCount);
      sums.addTo(c, out);
      expect(out.some((v) => v > 0)).toBe(true);
      expect(Array.from(out)).toEqual(Array.from(expected[c]));
    }
  });

  // A frame's amplitude² from PFFFT comes out of spectrumKernels.wat's `power` (issue #22): frame by frame the
  // very doubles of the JavaScript arithmetic (addAmplitudeSquared into zeros runs it), and in a Float32Array
  // those doubles rounded as an assignment rounds them.
  it.each([32, 64, 2048, 4096])("gives amplitudeSquared from the kernel bit for bit as the JavaScript (N = %i)", (n) => {
    const a = createSpectrumAnalyzer(n);
    expect(a.engine).toBe("pffft-wasm-simd");
    for (let frame = 0; frame < 3; frame++) {
      const x = Float32Array.from(randomFrame(n, 500 + frame), (v, i) => (frame === 1 ? 1e-6 * v : frame === 2 ? Math.sin(0.3 * i) : v));
      const fromKernel = new Float64Array(a.binCount);
      a.amplitudeSquared(x, fromKernel);
      const fromJs = new Float64Array(a.binCount);
      a.addAmplitudeSquared(x, fromJs);
      expect(fromKernel.some((v) => v > 0)).toBe(true);
      expect(Array.from(fromKernel)).toEqual(Array.from(fromJs));
      const single = new Float32Array(a.binCount + 2).fill(-1);
      a.amplitudeSquared(x, single);
      expect(Array.from(single.subarray(0, a.binCount))).toEqual(Array.from(Float32Array.from(fromJs)));
      // Nothing written past the bins.
      expect(Array.from(single.subarray(a.binCount))).toEqual([-1, -1]);
    }
  });

  // With images, spectralAnalyser.ts adds each frame's spectrum to its channel's Welch sum and the channel mean
  // in spectrumKernels.wat's `accumulate`: the JavaScript's doubles, bin for bin.
  it("accumulates a spectrum into a sum and a mean in the kernel as the JavaScript does", () => {
    const n = 2049;
    const k = createSpectrumKernels(3 * 8 * n)!;
    const x = new Float64Array(k.memory.buffer, 0, n);
    const sum = new Float64Array(k.memory.buffer, 8 * n, n);
    const mean = new Float64Array(k.memory.buffer, 16 * n, n);
    const jsSum = new Float64Array(n);
    const jsMean = new Float64Array(n);
    const share = 1 / 3;
    for (let frame = 0; frame < 3; frame++) {
      const values = randomFrame(n, 900 + frame);
      for (let i = 0; i < n; i++) x[i] = values[i] * values[i] * 10 ** (frame - i / 300);
      k.accumulate(0, 8 * n, 16 * n, n, share);
      for (let i = 0; i < n; i++) {
        jsSum[i] += x[i];
        jsMean[i] += x[i] * share;
      }
    }
    expect(sum.some((v) => v > 0)).toBe(true);
    expect(Array.from(sum)).toEqual(Array.from(jsSum));
    expect(Array.from(mean)).toEqual(Array.from(jsMean));
  });

  it("has the WebAssembly SIMD kernel for those sums on this runtime", () => {
    expect(createSpectrumKernels(1024)).not.toBeNull();
  });

  it("rejects frames and outputs that are too short", () => {
    const a = createSpectrumAnalyzer(64);
    expect(() => a.magnitudeDb(new Float32Array(63), new Float64Array(33))).toThrow(/at least fftSize = 64 samples, got 63/);
    expect(() => a.amplitudeSquared(new Float32Array(64), new Float64Array(32))).toThrow(/binCount = 33 values, got 32/);
    expect(() => a.spectrum(new Float32Array(64), new Float64Array(64))).toThrow(/2 × fftSize = 128 values, got 64/);
  });
});
