/**
 * The one adapter around the FFTs (fft.js, CommonJS with `any` typings, and PFFFT in WASM SIMD via
 * ./pffft.ts): everything else in Tidemark sees only the typed `SpectrumAnalyzer` below. One analyzer owns
 * its planned transforms, its Hann window and its scratch buffers, so a caller that keeps one analyzer per
 * configuration allocates nothing per frame.
 *
 * Which transform serves which call (issue #22; figures from scripts/bench/fft.ts):
 * - `amplitudeSquared` / `magnitudeDb` (every STFT, hum and close-up frame) run PFFFT's single-precision
 *   real transform where it exists (sizes that are multiples of 32, a runtime with WASM SIMD), about 4×
 *   fft.js at 512 … 65536 points with the copies in and out; its rounding sits ≈ 135 dB below a frame's
 *   strongest bin, far under any level the analysis reports.
 * - `spectrum` / `pairSpectrum` (complex output: the fingerprint) stay on fft.js in double precision,
 *   which issue #4 checks against a naive DFT to 1e-9, as does `engine: "fft.js"` (the fine spectrum). Its
 *   transforms run as fftJsKernels.wat where WebAssembly is, fft.js's own code with the same bits
 *   (tests/shared/fftJsKernels.test.ts): a short file's few transforms never got V8's optimised code.
 */
import FFT from "fft.js";
import { createFftJsKernel, type FftJsKernel } from "./fftJsKernels.ts";
import { pffftRealPlan } from "./pffft.ts";
import { createSpectrumKernels } from "./spectrumKernels.ts";

/** Anything indexable by sample: the block and frame buffers are Float32Array, test frames Float64Array. */
export type SampleFrame = Float32Array | Float64Array;

export interface SpectrumAnalyzer {
  readonly fftSize: number;
  /** The transform behind `amplitudeSquared` and `magnitudeDb` (tests and benches say which ran). */
  readonly engine: "pffft-wasm-simd" | "fft.js";
  /** Bins 0 … fftSize/2 of the one-sided spectrum. */
  readonly binCount: number;
  /** Periodic ("DFT-even") Hann window, length fftSize. */
  readonly window: Float64Array;
  /** Σw: the coherent gain times fftSize. */
  readonly windowSum: number;
  /** Σw²: sets the noise bandwidth of a bin. */
  readonly windowEnergy: number;
  /**
   * Equivalent noise bandwidth in bins, fftSize·Σw²/(Σw)² (1.5 for Hann; Harris 1978, Table 1).
   * A bin's amplitude² divided by 2·ENBW is its share of the signal's mean square.
   */
  readonly noiseBandwidthBins: number;
  /** Windowed complex spectrum, interleaved [re, im] for bins 0 … fftSize/2 in out[0 … fftSize+1]. */
  spectrum(frame: SampleFrame, out: Float64Array): void;
  /**
   * Two real frames in one complex transform (fft.js's complex transform costs less than two real
   * ones): the windowed spectrum Z of a + i·b, all fftSize bins interleaved in out[0 … 2·fftSize).
   * Then A[k] = (Z[k] + conj Z[N−k]) / 2 and B[k] = (Z[k] − conj Z[N−k]) / 2i, and
   * |A[k]|² + |B[k]|² = (|Z[k]|² + |Z[N−k]|²) / 2.
   */
  pairSpectrum(a: SampleFrame, b: SampleFrame, out: Float64Array): void;
  /**
   * Window-corrected amplitude², one value a bin: a sine of peak amplitude a centred on bin k reads a²
   * there (so a full-scale sine reads 1, i.e. 0 dBFS). DC and Nyquist have no mirror image, so they are
   * not doubled.
   */
  amplitudeSquared(frame: SampleFrame, out: Float32Array | Float64Array): void;
  /** 10·log10 of `amplitudeSquared` (dB re full scale; −Infinity for an empty bin). */
  magnitudeDb(frame: SampleFrame, out: Float32Array | Float64Array): void;
  /**
   * Adds `amplitudeSquared(frame)` bin by bin to `sum` (a Welch sum): the same doubles as computing them into
   * a Float64Array first and adding that, in one pass with no spectrum in between.
   */
  addAmplitudeSquared(frame: SampleFrame, sum: Float64Array): void;
  /**
   * Per-channel sums of `amplitudeSquared` over frames (Welch), kept where the quickest path adds into them:
   * with PFFFT, in the memory of a WebAssembly SIMD kernel (spectrumKernels.wat; a scan without images adds
   * 360 frames a 1 s stereo file), else in JavaScript through `addAmplitudeSquared`. The same doubles either way.
   */
  powerSums(channels: number): PowerSums;
}

export interface PowerSums {
  /** Adds amplitudeSquared(frame) to channel c's sums. */
  add(channel: number, frame: SampleFrame): void;
  /** Adds channel c's sums to out[0 … binCount) (into an empty Welch sum: the very values). */
  addTo(channel: number, out: Float64Array): void;
}

export function isPowerOfTwo(n: number): boolean {
  return Number.isInteger(n) && n > 1 && (n & (n - 1)) === 0;
}

export interface SpectrumAnalyzerOptions {
  /** "fft.js" forces the double-precision path for the amplitude spectra too: where levels far below the signal are judged (the fine spectrum), and for benches and comparisons. */
  engine?: "auto" | "fft.js";
}

interface HannWindow {
  window: Float64Array;
  windowSum: number;
  windowEnergy: number;
}

/**
 * One window and one fft.js plan a size for the whole process, up to CACHED_MAX_SIZE: a scan of many short
 * files makes three analyzers a file, and their cosines and tables were a tenth of setting a file up (issue
 * #22). Nothing writes into a window; an fft.js plan keeps no state between calls (each runs to its end
 * before another can start), so analyzers may share it.
 */
const hannWindows = new Map<number, HannWindow>();
const fftJsPlans = new Map<number, FFT>();
/** Larger sizes (a custom profile's) are made for their analyzer alone rather than kept for the process. */
const CACHED_MAX_SIZE = 65536;

function fftJsPlan(fftSize: number): FFT {
  let plan = fftJsPlans.get(fftSize);
  if (plan === undefined) {
    plan = new FFT(fftSize);
    if (fftSize <= CACHED_MAX_SIZE) fftJsPlans.set(fftSize, plan);
  }
  return plan;
}

function hannWindow(fftSize: number): HannWindow {
  const cached = hannWindows.get(fftSize);
  if (cached) return cached;
  const window = new Float64Array(fftSize);
  let windowSum = 0;
  let windowEnergy = 0;
  for (let n = 0; n < fftSize; n++) {
    // Periodic Hann: exactly Σw = N/2 and no duplicated end sample (Harris 1978, "DFT-even" windows).
    const w = 0.5 - 0.5 * Math.cos((2 * Math.PI * n) / fftSize);
    window[n] = w;
    windowSum += w;
    windowEnergy += w * w;
  }
  const made = { window, windowSum, windowEnergy };
  if (fftSize <= CACHED_MAX_SIZE) hannWindows.set(fftSize, made);
  return made;
}

export function createSpectrumAnalyzer(fftSize: number, options: SpectrumAnalyzerOptions = {}): SpectrumAnalyzer {
  // fft.js checks too, but with a message that does not say what arrived; 2^30 keeps `n & (n − 1)` in int32.
  if (!isPowerOfTwo(fftSize) || fftSize > 2 ** 30) {
    throw new Error(`fftSize must be a power of two > 1, got ${fftSize}`);
  }
  const binCount = fftSize / 2 + 1;
  const { window, windowSum, windowEnergy } = hannWindow(fftSize);
  // Amplitude of bin k is 2|X_k|/Σw (one-sided); DC and Nyquist are |X_k|/Σw.
  const sideScale = 4 / (windowSum * windowSum);
  const edgeScale = 1 / (windowSum * windowSum);
  const plan = options.engine === "fft.js" ? null : pffftRealPlan(fftSize);

  // fft.js and its buffers only once a caller needs them: the STFT path never does when PFFFT serves it.
  let fft: FFT | null = null;
  let windowed: Float64Array | null = null;
  let scratch: Float64Array | null = null;
  let pairInput: Float64Array | null = null;
  const fftJs = (): FFT => (fft ??= fftJsPlan(fftSize));
  // fft.js's transforms in WebAssembly, made on the first transform (null: fft.js itself runs).
  let kernel: FftJsKernel | null | undefined;
  const fftJsKernel = (): FftJsKernel | null => (kernel === undefined ? (kernel = createFftJsKernel(fftSize, window)) : kernel);

  function checkFrame(frame: SampleFrame): void {
    if (frame.length < fftSize) {
      throw new Error(`frame must hold at least fftSize = ${fftSize} samples, got ${frame.length}`);
    }
  }

  function checkBins(out: Float32Array | Float64Array): void {
    if (out.length < binCount) throw new Error(`out must hold binCount = ${binCount} values, got ${out.length}`);
  }

  /**
   * fft.js's realTransform of the windowed frame: the kernel's output, or `out` (2·fftSize values at least;
   * null: a scratch array, made on first need).
   */
  function transform(frame: SampleFrame, out: Float64Array | null): Float64Array {
    checkFrame(frame);
    const k = fftJsKernel();
    if (k) return k.windowedRealTransform(frame);
    windowed ??= new Float64Array(fftSize);
    for (let n = 0; n < fftSize; n++) windowed[n] = frame[n] * window[n];
    const into = out ?? (scratch ??= new Float64Array(2 * fftSize));
    // realTransform fills bins 0 … N/2 (the left half); the mirrored half is never needed here.
    fftJs().realTransform(into, windowed);
    return into;
  }

  function amplitudeSquaredFftJs(frame: SampleFrame, out: Float32Array | Float64Array): void {
    const complex = transform(frame, null);
    const last = binCount - 1;
    out[0] = complex[0] * complex[0] * edgeScale;
    for (let k = 1; k < last; k++) {
      const re = complex[2 * k];
      const im = complex[2 * k + 1];
      out[k] = (re * re + im * im) * sideScale;
    }
    const reN = complex[2 * last];
    const imN = complex[2 * last + 1];
    out[last] = (reN * reN + imN * imN) * edgeScale;
  }

  /**
   * The periodic Hann applied after the transform: w[n] = ½ − ¼e^(2πin/N) − ¼e^(−2πin/N), so by the DFT's
   * modulation property (Oppenheim & Schafer, 3rd ed., ch. 8) X_w[k] = ½X[k] − ¼(X[k−1] + X[k+1])
   * exactly. The frame is then copied into the heap as it is, with no
   * windowing pass and no window table to read. X[−1] = conj X[1] and X[N/2+1] = conj X[N/2−1] for a
   * real frame; DC and Nyquist are real (PFFFT packs them into the first two slots).
   */
  function amplitudeSquaredPffft(frame: SampleFrame, out: Float32Array | Float64Array): void {
    checkFrame(frame);
    const h = plan!.forward(frame);
    const o = plan!.outputIndex;
    const half = fftSize >> 1;
    const dc = h[o];
    const nyquist = h[o + 1];
    // k = 0 and k = N/2: real; their neighbours' imaginary parts cancel against the mirror image.
    const w0 = 0.5 * dc - 0.5 * h[o + 2];
    out[0] = w0 * w0 * edgeScale;
    const wN = 0.5 * nyquist - 0.5 * h[o + fftSize - 2];
    out[half] = wN * wN * edgeScale;
    // k = 1: its lower neighbour is DC (imaginary part 0).
    {
      const re = 0.5 * h[o + 2] - 0.25 * (dc + h[o + 4]);
      const im = 0.5 * h[o + 3] - 0.25 * h[o + 5];
      out[1] = (re * re + im * im) * sideScale;
    }
    for (let k = 2; k < half - 1; k++) {
      const i = o + 2 * k;
      const re = 0.5 * h[i] - 0.25 * (h[i - 2] + h[i + 2]);
      const im = 0.5 * h[i + 1] - 0.25 * (h[i - 1] + h[i + 3]);
      out[k] = (re * re + im * im) * sideScale;
    }
    // k = N/2 − 1: its upper neighbour is Nyquist (imaginary part 0).
    {
      const i = o + fftSize - 2;
      const re = 0.5 * h[i] - 0.25 * (h[i - 2] + nyquist);
      const im = 0.5 * h[i + 1] - 0.25 * h[i - 1];
      out[half - 1] = (re * re + im * im) * sideScale;
    }
  }

  /** amplitudeSquaredPffft's arithmetic, each value added to sum[k] instead of stored. */
  function addAmplitudeSquaredPffft(frame: SampleFrame, sum: Float64Array): void {
    checkFrame(frame);
    const h = plan!.forward(frame);
    const o = plan!.outputIndex;
    const half = fftSize >> 1;
    const dc = h[o];
    const nyquist = h[o + 1];
    const w0 = 0.5 * dc - 0.5 * h[o + 2];
    sum[0] += w0 * w0 * edgeScale;
    {
      const re = 0.5 * h[o + 2] - 0.25 * (dc + h[o + 4]);
      const im = 0.5 * h[o + 3] - 0.25 * h[o + 5];
      sum[1] += (re * re + im * im) * sideScale;
    }
    for (let k = 2; k < half - 1; k++) {
      const i = o + 2 * k;
      const re = 0.5 * h[i] - 0.25 * (h[i - 2] + h[i + 2]);
      const im = 0.5 * h[i + 1] - 0.25 * (h[i - 1] + h[i + 3]);
      sum[k] += (re * re + im * im) * sideScale;
    }
    {
      const i = o + fftSize - 2;
      const re = 0.5 * h[i] - 0.25 * (h[i - 2] + nyquist);
      const im = 0.5 * h[i + 1] - 0.25 * h[i - 1];
      sum[half - 1] += (re * re + im * im) * sideScale;
    }
    const wN = 0.5 * nyquist - 0.5 * h[o + fftSize - 2];
    sum[half] += wN * wN * edgeScale;
  }

  let addScratch: Float64Array | null = null;
  const addAmplitudeSquared =
    plan === null
      ? (frame: SampleFrame, sum: Float64Array): void => {
          checkBins(sum);
          addScratch ??= new Float64Array(binCount);
          amplitudeSquaredFftJs(frame, addScratch);
          for (let k = 0; k < binCount; k++) sum[k] += addScratch[k];
        }
      : (frame: SampleFrame, sum: Float64Array): void => {
          checkBins(sum);
          addAmplitudeSquaredPffft(frame, sum);
        };

  function powerSums(channels: number): PowerSums {
    if (!Number.isInteger(channels) || channels < 1) throw new Error(`channels must be a positive integer, got ${channels}`);
    // The frame's spectrum is copied from PFFFT's heap into the kernel's memory, the sums follow it.
    const sumsAt = 4 * fftSize;
    const sumBytes = 8 * binCount;
    const kernels = plan === null || fftSize < 8 ? null : createSpectrumKernels(sumsAt + channels * sumBytes);
    if (kernels === null) {
      const sums = Array.from({ length: channels }, () => new Float64Array(binCount));
      return {
        add: (channel, frame) => addAmplitudeSquared(frame, sums[channel]),
        addTo(channel, out) {
          const sum = sums[channel];
          for (let k = 0; k < binCount; k++) out[k] += sum[k];
        },
      };
    }
    const spectrum = new Float32Array(kernels.memory.buffer, 0, fftSize);
    const sums = Array.from({ length: channels }, (_, c) => new Float64Array(kernels.memory.buffer, sumsAt + c * sumBytes, binCount));
    const half = fftSize >> 1;
    const p = plan!;
    // PFFFT's heap view and the frame's spectrum in it (the same until its memory were replaced).
    let heap: Float32Array | null = null;
    let output: Float32Array = new Float32Array(0);
    return {
      add(channel, frame) {
        checkFrame(frame);
        const h = p.forward(frame);
        if (h !== heap) {
          heap = h;
          output = h.subarray(p.outputIndex, p.outputIndex + fftSize);
        }
        spectrum.set(output);
        kernels.addPower(0, sumsAt + channel * sumBytes, half, sideScale, edgeScale);
      },
      addTo(channel, out) {
        const sum = sums[channel];
        for (let k = 0; k < binCount; k++) out[k] += sum[k];
      },
    };
  }

  // amplitudeSquaredPffft's arithmetic in WebAssembly SIMD (spectrumKernels.wat's `power`, the same doubles):
  // a short file's frames are too few for V8 to optimise the JavaScript loop before most of them are done,
  // and unoptimised it boxes every double (issue #22). The frame's spectrum is copied from PFFFT's heap into
  // the kernel's memory, the values out of it.
  const frameKernels = plan === null || fftSize < 8 ? null : createSpectrumKernels(4 * fftSize + 8 * binCount);
  const amplitudeSquaredKernel = (() => {
    if (frameKernels === null) return null;
    const p = plan!;
    const spectrumIn = new Float32Array(frameKernels.memory.buffer, 0, fftSize);
    const powerOut = new Float64Array(frameKernels.memory.buffer, 4 * fftSize, binCount);
    const half = fftSize >> 1;
    let heap: Float32Array | null = null;
    let output: Float32Array = new Float32Array(0);
    return (frame: SampleFrame, out: Float32Array | Float64Array): void => {
      checkFrame(frame);
      const h = p.forward(frame);
      if (h !== heap) {
        heap = h;
        output = h.subarray(p.outputIndex, p.outputIndex + fftSize);
      }
      spectrumIn.set(output);
      frameKernels.power(0, 4 * fftSize, half, sideScale, edgeScale);
      // Into a Float32Array, set() rounds each value as an element assignment does.
      out.set(powerOut);
    };
  })();

  const amplitudeSquared =
    plan === null
      ? (frame: SampleFrame, out: Float32Array | Float64Array): void => {
          checkBins(out);
          amplitudeSquaredFftJs(frame, out);
        }
      : amplitudeSquaredKernel !== null
        ? (frame: SampleFrame, out: Float32Array | Float64Array): void => {
            checkBins(out);
            amplitudeSquaredKernel(frame, out);
          }
        : (frame: SampleFrame, out: Float32Array | Float64Array): void => {
            checkBins(out);
            amplitudeSquaredPffft(frame, out);
          };

  return {
    fftSize,
    engine: plan === null ? "fft.js" : "pffft-wasm-simd",
    binCount,
    window,
    windowSum,
    windowEnergy,
    noiseBandwidthBins: (fftSize * windowEnergy) / (windowSum * windowSum),
    spectrum(frame, out) {
      if (out.length < 2 * fftSize) {
        throw new Error(`out must hold 2 × fftSize = ${2 * fftSize} values, got ${out.length}`);
      }
      const spectrum = transform(frame, out);
      if (spectrum !== out) out.set(spectrum);
    },
    pairSpectrum(a, b, out) {
      checkFrame(a);
      checkFrame(b);
      if (out.length < 2 * fftSize) {
        throw new Error(`out must hold 2 × fftSize = ${2 * fftSize} values, got ${out.length}`);
      }
      const k = fftJsKernel();
      if (k) {
        out.set(k.windowedPairTransform(a, b));
        return;
      }
      pairInput ??= new Float64Array(2 * fftSize);
      for (let n = 0; n < fftSize; n++) {
        pairInput[2 * n] = a[n] * window[n];
        pairInput[2 * n + 1] = b[n] * window[n];
      }
      fftJs().transform(out, pairInput);
    },
    amplitudeSquared,
    magnitudeDb(frame, out) {
      amplitudeSquared(frame, out);
      for (let k = 0; k < binCount; k++) out[k] = 10 * Math.log10(out[k]);
    },
    addAmplitudeSquared,
    powerSums,
  };
}
