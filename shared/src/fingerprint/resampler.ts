/**
 * Streaming band-limited resampler (Kaiser-windowed sinc, polyphase table), so the fingerprint
 * is computed on one fixed internal rate whatever the file's rate: a 44.1 kHz and a 48 kHz copy of
 * a recording then give the same spectrogram grid. Built for that use: passband and stopband are
 * given in hertz, the table is computed once, and `read` allocates nothing.
 */

import { createSimdResampleStore, type SimdResampleStore } from "./resamplerSimd.ts";

export interface ResamplerOptions {
  inputRateHz: number;
  outputRateHz: number;
  /** Highest frequency passed with ~0 dB. */
  passbandHz: number;
  /** Lowest frequency attenuated by ≥ STOPBAND_ATTENUATION_DB. */
  stopbandHz: number;
  /**
   * Run the multiply-adds in WebAssembly SIMD where available (default true): bit-identical to the
   * JavaScript loop, which stays for hosts without it and for the test that compares the two.
   */
  simd?: boolean;
}

export interface StreamingResampler {
  readonly inputRateHz: number;
  readonly outputRateHz: number;
  /** Appends `input[0, count)`; the caller may reuse `input` afterwards. */
  write(input: Float32Array, count: number): void;
  /** Declares the end of input: the tail is filtered as if followed by silence. */
  end(): void;
  /** Writes up to `out.length` ready output samples into `out`, returns how many. */
  read(out: Float32Array): number;
}

/** Sub-sample phases of the kernel table: the nearest phase is at most 1/1024 sample off. */
const PHASES = 512;
/**
 * 40 dB puts anything folded into the fingerprint band 40 dB under what it folds from, itself
 * mostly well under the 300 Hz–4 kHz content (spectra fall with frequency, common practice): far
 * below the peaks a fingerprint keeps, at 60 % of the taps 60 dB takes (the kernel is the
 * fingerprint's largest cost). Kaiser's design formulas (common practice, from memory):
 * β = 0.5842·(A − 21)^0.4 + 0.07886·(A − 21) for 21 < A ≤ 50, and length = (A − 8) / (2.285 · 2π·Δf/rate).
 */
export const STOPBAND_ATTENUATION_DB = 40;
const KAISER_BETA =
  STOPBAND_ATTENUATION_DB > 50
    ? 0.1102 * (STOPBAND_ATTENUATION_DB - 8.7)
    : 0.5842 * (STOPBAND_ATTENUATION_DB - 21) ** 0.4 + 0.07886 * (STOPBAND_ATTENUATION_DB - 21);

/** Modified Bessel function of the first kind, order 0, by its power series (table set-up only). */
function besselI0(x: number): number {
  let sum = 1;
  let term = 1;
  for (let k = 1; k < 50; k++) {
    term *= (x / (2 * k)) ** 2;
    sum += term;
    if (term < 1e-12 * sum) break;
  }
  return sum;
}

/** Kernel tables by (input rate, cutoff, half-length): a batch of files at one rate builds its table once. */
const tableCache = new Map<string, Float32Array>();

/** table[p * taps + k] weights input index (i0 − half + 1 + k) for an output at i0 + p/PHASES. */
function kernelTable(inputRateHz: number, cutoffHz: number, half: number): Float32Array {
  const key = `${inputRateHz}/${cutoffHz}/${half}`;
  const cached = tableCache.get(key);
  if (cached) return cached;
  const taps = 2 * half;
  const table = new Float32Array((PHASES + 1) * taps);
  const normCutoff = (2 * cutoffHz) / inputRateHz;
  const windowNorm = 1 / besselI0(KAISER_BETA);
  for (let p = 0; p <= PHASES; p++) {
    const frac = p / PHASES;
    let sum = 0;
    for (let k = 0; k < taps; k++) {
      const u = k - half + 1 - frac;
      const x = normCutoff * u;
      const sinc = x === 0 ? 1 : Math.sin(Math.PI * x) / (Math.PI * x);
      const t = u / half;
      const w = Math.abs(t) >= 1 ? 0 : besselI0(KAISER_BETA * Math.sqrt(1 - t * t)) * windowNorm;
      const h = sinc * w;
      table[p * taps + k] = h;
      sum += h;
    }
    // Unit DC gain in every phase, so a constant stays constant.
    for (let k = 0; k < taps; k++) table[p * taps + k] /= sum;
  }
  // Few distinct rates occur in practice; the bound only guards against odd callers.
  if (tableCache.size >= 16) tableCache.delete(tableCache.keys().next().value!);
  tableCache.set(key, table);
  return table;
}

export interface MultiChannelResampler {
  readonly channels: number;
  /** Appends `inputs[c][0, count)` for every channel; the caller may reuse the arrays afterwards. */
  write(inputs: readonly Float32Array[], count: number): void;
  end(): void;
  /** Writes up to `outs[c].length` (the shortest) ready samples per channel, returns how many. */
  read(outs: readonly Float32Array[]): number;
}

export function createStreamingResampler(o: ResamplerOptions): StreamingResampler {
  const inner = createMultiChannelResampler(o, 1);
  const one: Float32Array[] = [new Float32Array(0)];
  return {
    inputRateHz: o.inputRateHz,
    outputRateHz: o.outputRateHz,
    write(input, count) {
      one[0] = input;
      inner.write(one, count);
    },
    end: () => inner.end(),
    read(out) {
      one[0] = out;
      return inner.read(one);
    },
  };
}

/**
 * All channels of a stream through one kernel: each output position and kernel row is worked out once,
 * and channels go through the taps in pairs, so every kernel value loaded serves two of them.
 */
export function createMultiChannelResampler(o: ResamplerOptions, channels: number): MultiChannelResampler {
  const { inputRateHz, outputRateHz } = o;
  for (const [name, v] of [["inputRateHz", inputRateHz], ["outputRateHz", outputRateHz]] as const) {
    if (!Number.isFinite(v) || v <= 0) throw new RangeError(`${name} must be a positive number, got ${v}`);
  }
  if (!(o.passbandHz > 0 && o.stopbandHz > o.passbandHz)) {
    throw new RangeError(`need 0 < passbandHz < stopbandHz, got ${o.passbandHz} and ${o.stopbandHz}`);
  }
  if (!Number.isInteger(channels) || channels < 1) throw new RangeError(`channels must be an integer ≥ 1, got ${channels}`);
  // Never put the cutoff above the input's own Nyquist (upsampling from a low rate).
  const inputNyquistHz = inputRateHz / 2;
  const transitionHz = Math.min(o.stopbandHz - o.passbandHz, inputNyquistHz);
  const cutoffHz = Math.min((o.passbandHz + o.stopbandHz) / 2, inputNyquistHz);
  const length = (STOPBAND_ATTENUATION_DB - 8) / (2.285 * ((2 * Math.PI * transitionHz) / inputRateHz));
  const half = Math.max(2, Math.ceil(length / 2));
  const taps = 2 * half;

  const table = kernelTable(inputRateHz, cutoffHz, half);

  const step = inputRateHz / outputRateHz;
  const initialCapacity = Math.max(4096, 4 * taps);
  const simd: SimdResampleStore | null = o.simd === false ? null : createSimdResampleStore(table, taps, channels, initialCapacity);
  // History starts with `half` zeros so the first outputs see silence before the file.
  let bufs: Float32Array[] = [];
  if (simd) bufs = simd.buffers.slice();
  else for (let c = 0; c < channels; c++) bufs.push(new Float32Array(initialCapacity));
  // A store's fresh memory is zero, and so are fresh arrays: the leading `half` zeros are there already.
  let bufStart = -half; // absolute input index of bufs[c][0]
  let bufLen = half;
  let inputSamples = 0;
  let ended = false;
  let outIndex = 0;

  function compactAndReserve(extra: number): void {
    const keepFrom = Math.floor(outIndex * step) - half + 1;
    const drop = Math.max(0, Math.min(bufLen, keepFrom - bufStart));
    if (drop > 0) {
      for (const b of bufs) b.copyWithin(0, drop, bufLen);
      bufStart += drop;
      bufLen -= drop;
    }
    if (bufLen + extra > bufs[0].length && simd) {
      simd.grow(bufLen + extra, bufLen);
      bufs = simd.buffers.slice();
    } else if (bufLen + extra > bufs[0].length) {
      const size = Math.max(2 * bufs[0].length, bufLen + extra);
      bufs = bufs.map((b) => {
        const grown = new Float32Array(size);
        grown.set(b.subarray(0, bufLen));
        return grown;
      });
    }
  }

  return {
    channels,
    write(inputs, count) {
      if (ended) throw new Error("resampler: write after end()");
      if (inputs.length !== channels) throw new RangeError(`resampler: got ${inputs.length} channels, expected ${channels}`);
      compactAndReserve(count);
      for (let c = 0; c < channels; c++) bufs[c].set(inputs[c].subarray(0, count), bufLen);
      bufLen += count;
      inputSamples += count;
    },
    end() {
      if (ended) return;
      compactAndReserve(half + 1);
      for (const b of bufs) b.fill(0, bufLen, bufLen + half + 1);
      bufLen += half + 1;
      ended = true;
    },
    read(outs) {
      if (outs.length !== channels) throw new RangeError(`resampler: got ${outs.length} outputs, expected ${channels}`);
      // Locals for the hot loop: V8 keeps closure variables out of registers.
      const inputs = bufs;
      const kernel = table;
      const width = taps;
      const lead = half - 1;
      const ratio = step;
      const origin = bufStart;
      const available = origin + bufLen; // one past the last buffered input index
      const limit = ended ? inputSamples : Number.POSITIVE_INFINITY;
      let capacity = outs[0].length;
      for (let c = 1; c < channels; c++) capacity = Math.min(capacity, outs[c].length);
      let index = outIndex;
      let n = 0;
      if (simd) {
        // The same choice of input and phase as the loop below, made in WebAssembly, a run at a time.
        for (;;) {
          const count = simd.plan({ index, ratio, limit, origin, available, lead, phases: PHASES, capacity: capacity - n });
          if (count === 0) break;
          simd.run(count, outs, n);
          n += count;
          index += count;
        }
        outIndex = index;
        return n;
      }
      while (n < capacity) {
        const x = index * ratio;
        if (x >= limit) break;
        let i0 = Math.floor(x);
        let p = Math.round((x - i0) * PHASES);
        if (p === PHASES) {
          i0 += 1;
          p = 0;
        }
        if (i0 + lead >= available - 1) break;
        const first = i0 - lead - origin;
        const row = p * width;
        let c = 0;
        for (; c + 1 < channels; c += 2) {
          const l = inputs[c];
          const r = inputs[c + 1];
          // Two partial sums per channel break the add dependency chain (taps is even).
          let a0 = 0;
          let a1 = 0;
          let b0 = 0;
          let b1 = 0;
          for (let k = 0; k < width; k += 2) {
            const k0 = kernel[row + k];
            const k1 = kernel[row + k + 1];
            a0 += l[first + k] * k0;
            a1 += l[first + k + 1] * k1;
            b0 += r[first + k] * k0;
            b1 += r[first + k + 1] * k1;
          }
          outs[c][n] = a0 + a1;
          outs[c + 1][n] = b0 + b1;
        }
        if (c < channels) {
          // The same sums in the same order as a pair: a channel resamples identically alone or paired.
          const input = inputs[c];
          let a0 = 0;
          let a1 = 0;
          for (let k = 0; k < width; k += 2) {
            a0 += input[first + k] * kernel[row + k];
            a1 += input[first + k + 1] * kernel[row + k + 1];
          }
          outs[c][n] = a0 + a1;
        }
        n++;
        index++;
      }
      outIndex = index;
      return n;
    },
  };
}
