/**
 * Streaming spectral fingerprint (issue #11) after "An Industrial-Strength Audio Search Algorithm"
 * (Wang, 2003). Each channel is resampled to one internal rate, so the time–frequency grid is the
 * same in seconds and hertz for every input rate; only 300 Hz–4 kHz is looked at, so a lossy-style
 * low-pass, an upsampled copy or a different transfer rate changes nothing the fingerprint sees.
 *
 * Channels are combined as the mean of their power spectra, not as a mono mix: a copy with one
 * channel polarity-inverted would cancel in L + R, while |L|² + |−R|² = |L|² + |R|². Identical
 * channels (a mono tape transferred to stereo) give the power of one of them. Channels go through
 * the FFT in pairs (one complex transform for two real frames).
 */
import type { AudioBlock, BlockAnalyser, StreamFormat } from "../types/analysis.ts";
import { createFramePowerSpectrum } from "./fftFrames.ts";
import { createPeakPicker, hashLandmarks } from "./landmarks.ts";
import { createHalvingStage, MIN_HALVING_INPUT_HZ, type HalvingStage } from "./halvingStage.ts";
import { createSimdHalvingStage } from "./halvingSimd.ts";
import { createMultiChannelResampler } from "./resampler.ts";
import type { Fingerprint } from "./types.ts";

/**
 * Bump whenever anything below changes the hashes: fingerprints of other versions don't compare.
 * 2: channels combined by power instead of a mono mix (mono files hash as in version 1).
 * 3: halving stages before a 40 dB anti-alias kernel (was one 60 dB kernel), peaks ranked on power,
 *    not dB, and a 46 ms hop (was 23 ms; the radii in frames halved with it): 3x faster. Copies
 *    misaligned by a fraction of a hop (a trim) share about a quarter fewer hashes than at 23 ms,
 *    still several times the match threshold.
 */
export const FINGERPRINT_VERSION = 3;

const ANALYSIS_RATE_HZ = 11025;
const FFT_SIZE = 1024; // 92.9 ms window, 10.77 Hz bins
const HOP_SIZE = 512; // 46.4 ms
const BAND_LOW_HZ = 300;
const BAND_HIGH_HZ = 4000;
const FIRST_BIN = Math.ceil((BAND_LOW_HZ * FFT_SIZE) / ANALYSIS_RATE_HZ);
const LAST_BIN = Math.floor((BAND_HIGH_HZ * FFT_SIZE) / ANALYSIS_RATE_HZ);
const BAND_BINS = LAST_BIN - FIRST_BIN + 1;

/** Hard ceiling of the issue: at most this many hashes per second of audio, on average. */
export const MAX_HASHES_PER_SECOND = 20;
/**
 * And at most this many per file (13.9 h at the ceiling rate), so the encoded text stays below
 * 1e6 × 9 bytes × 4/3 = 12 MB even with the longest time deltas; later hashes are dropped.
 */
export const MAX_FINGERPRINT_HASHES = 1_000_000;

// Frozen: the hashes of FINGERPRINT_VERSION depend on every value here.
const PEAKS = Object.freeze({
  bins: BAND_BINS,
  freqRadiusBins: 10, // ±108 Hz
  timeRadiusFrames: 2, // ±93 ms
  // A full-scale sine peaks at |X|² = (N/4)² in a Hann-windowed bin; ignore 100 dB below that.
  floor: (FFT_SIZE / 4) ** 2 * 1e-10,
  peaksPerWindow: 6,
  rankRadiusFrames: 21, // any 22 frames (≈ 1 s) hold ≤ 6 kept peaks, so ≤ 18 hashes
});
const PAIRS = Object.freeze({ fanOut: 3, minDeltaFrames: 1, maxDeltaFrames: 31, maxDeltaBins: BAND_BINS - 1 });

/** The fixed analysis grid, for callers that reason in frames (index, tests, server docs). */
export const FINGERPRINT_GRID = Object.freeze({
  version: FINGERPRINT_VERSION,
  analysisRateHz: ANALYSIS_RATE_HZ,
  fftSize: FFT_SIZE,
  hopSize: HOP_SIZE,
  hopSeconds: HOP_SIZE / ANALYSIS_RATE_HZ,
  bandLowHz: (FIRST_BIN * ANALYSIS_RATE_HZ) / FFT_SIZE,
  bandHighHz: (LAST_BIN * ANALYSIS_RATE_HZ) / FFT_SIZE,
  bandBins: BAND_BINS,
  peaks: PEAKS,
  pairs: PAIRS,
});

/** Anchor time of frame k: the centre of its window. */
export function frameTimeSeconds(frame: number): number {
  return (frame * HOP_SIZE + FFT_SIZE / 2) / ANALYSIS_RATE_HZ;
}

export const MIN_SAMPLE_RATE_HZ = 8000;
export const MAX_SAMPLE_RATE_HZ = 384000;

/** Whether createFingerprinter accepts this stream (a scan still measures a file it cannot fingerprint). */
export function canFingerprint(format: Pick<StreamFormat, "sampleRateHz" | "channels">): boolean {
  const { sampleRateHz, channels } = format;
  return sampleRateHz >= MIN_SAMPLE_RATE_HZ && sampleRateHz <= MAX_SAMPLE_RATE_HZ && Number.isInteger(channels) && channels >= 1;
}

export function createFingerprinter(format: StreamFormat): BlockAnalyser<Fingerprint> {
  const { sampleRateHz, channels } = format;
  if (!Number.isFinite(sampleRateHz) || sampleRateHz < MIN_SAMPLE_RATE_HZ || sampleRateHz > MAX_SAMPLE_RATE_HZ) {
    throw new RangeError(`fingerprint: sampleRateHz must be in [${MIN_SAMPLE_RATE_HZ}, ${MAX_SAMPLE_RATE_HZ}], got ${sampleRateHz}`);
  }
  if (!Number.isInteger(channels) || channels < 1) {
    throw new RangeError(`fingerprint: channels must be an integer ≥ 1, got ${channels}`);
  }

  // Rates of 44.1 kHz and up are first halved, cheaply, down to 22.05–44.1 kHz: the Kaiser kernel's
  // length grows with its input rate, and it costs far more an output than a halving does.
  const halvings: HalvingStage[] = [];
  let kernelRateHz = sampleRateHz;
  while (kernelRateHz >= MIN_HALVING_INPUT_HZ) {
    halvings.push(createSimdHalvingStage(channels) ?? createHalvingStage(channels));
    kernelRateHz /= 2;
  }
  const halved: Float32Array[][] = halvings.map(() => Array.from({ length: channels }, () => new Float32Array(0)));

  // One resampler for all channels (they share its kernel), and one frame buffer per channel.
  const resampler = createMultiChannelResampler(
    {
      inputRateHz: kernelRateHz,
      outputRateHz: ANALYSIS_RATE_HZ,
      passbandHz: BAND_HIGH_HZ,
      // Anything above (internal rate − 4 kHz) would fold back into the band; between that and 4 kHz may leak.
      stopbandHz: ANALYSIS_RATE_HZ - BAND_HIGH_HZ,
    },
    channels,
  );
  const frames: Float32Array[] = [];
  const cleaned: Float32Array[] = [];
  for (let c = 0; c < channels; c++) {
    frames.push(new Float32Array(FFT_SIZE));
    cleaned.push(new Float32Array(0));
  }
  // Only float data can hold NaN or infinity; decoded integers are always finite.
  const mayHoldNonFinite = format.encoding !== "pcm";
  const spectrum = createFramePowerSpectrum(FFT_SIZE);
  const picker = createPeakPicker(PEAKS);

  const resampled = frames.map(() => new Float32Array(4096));
  let frameFill = 0;
  const bandPower = new Float64Array(BAND_BINS);
  const bandMean = new Float32Array(BAND_BINS);
  const inverseChannels = 1 / channels;
  let framesPushed = 0;
  let finished = false;

  function drain(): void {
    for (;;) {
      const n = resampler.read(resampled);
      if (n === 0) return;
      let at = 0;
      while (at < n) {
        const take = Math.min(n - at, FFT_SIZE - frameFill);
        for (let c = 0; c < channels; c++) frames[c].set(resampled[c].subarray(at, at + take), frameFill);
        frameFill += take;
        at += take;
        if (frameFill === FFT_SIZE) {
          bandPower.fill(0);
          let c = 0;
          for (; c + 1 < channels; c += 2) spectrum.addPairPower(frames[c], frames[c + 1], FIRST_BIN, bandPower);
          if (c < channels) spectrum.addPower(frames[c], FIRST_BIN, bandPower);
          for (const frame of frames) frame.copyWithin(0, HOP_SIZE);
          for (let k = 0; k < BAND_BINS; k++) bandMean[k] = bandPower[k] * inverseChannels;
          picker.pushFrame(bandMean);
          frameFill = FFT_SIZE - HOP_SIZE;
        }
      }
    }
  }

  return {
    push(block: AudioBlock) {
      if (finished) throw new Error("fingerprint: push() after finish()");
      const { frames: count } = block;
      if (block.channels.length !== channels) {
        throw new RangeError(`fingerprint: block has ${block.channels.length} channels, format says ${channels}`);
      }
      if (!Number.isInteger(count) || count < 0) throw new RangeError(`fingerprint: block frames must be an integer ≥ 0, got ${count}`);
      if (block.startFrame !== framesPushed) {
        throw new RangeError(`fingerprint: blocks must arrive in order: expected startFrame ${framesPushed}, got ${block.startFrame}`);
      }
      for (let c = 0; c < channels; c++) {
        if (block.channels[c].length < count) {
          throw new RangeError(`fingerprint: channel ${c} holds ${block.channels[c].length} samples, block says ${count}`);
        }
      }
      if (mayHoldNonFinite) {
        for (let c = 0; c < channels; c++) {
          if (cleaned[c].length < count) cleaned[c] = new Float32Array(count);
          const m = cleaned[c];
          const ch = block.channels[c];
          // Non-finite samples (reported elsewhere) would smear NaN over a kernel's length: treat as silence.
          for (let i = 0; i < count; i++) {
            const x = ch[i];
            m[i] = x - x === 0 ? x : 0;
          }
        }
      }
      let signal: Float32Array[] = mayHoldNonFinite ? cleaned : block.channels;
      let n = count;
      halvings.forEach((stage, s) => {
        const out = halved[s];
        const needed = Math.floor(n / 2) + 1;
        if (out[0].length < needed) for (let c = 0; c < channels; c++) out[c] = new Float32Array(needed);
        n = stage.push(signal, n, out);
        signal = out;
      });
      resampler.write(signal, n);
      framesPushed += count;
      drain();
    },
    finish() {
      if (finished) throw new Error("fingerprint: finish() called twice");
      finished = true;
      // A leftover odd sample at each stage makes one last output, fed through the stages after it.
      halvings.forEach((stage, s) => {
        const out = halved[s];
        if (out[0].length < 2) for (let c = 0; c < channels; c++) out[c] = new Float32Array(2);
        const tail = stage.end(out);
        if (tail === 0) return;
        let signal = out;
        let n = tail;
        for (let t = s + 1; t < halvings.length; t++) {
          const next = halved[t];
          if (next[0].length < 2) for (let c = 0; c < channels; c++) next[c] = new Float32Array(2);
          n = halvings[t].push(signal, n, next);
          signal = next;
        }
        if (n > 0) resampler.write(signal, n);
      });
      resampler.end();
      drain();
      const peaks = picker.finish();
      const { hashes, anchorFrames } = hashLandmarks(peaks, PAIRS);
      const durationSeconds = framesPushed / sampleRateHz;
      // The window bound gives ≤ 18.03 hashes/s on any long stretch; this also holds it on sub-second files.
      const count = Math.min(hashes.length, Math.floor(MAX_HASHES_PER_SECOND * durationSeconds), MAX_FINGERPRINT_HASHES);
      const times = new Float32Array(count);
      for (let i = 0; i < count; i++) times[i] = frameTimeSeconds(anchorFrames[i]);
      return { version: FINGERPRINT_VERSION, hashes: hashes.slice(0, count), times, durationSeconds };
    },
  };
}
