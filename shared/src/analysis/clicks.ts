/**
 * Clicks: short impulsive disturbances (about 0.02–5 ms) that stand out of the local signal. The method is
 * the autoregressive (AR) prediction-residual detector of S. J. Godsill and P. J. W. Rayner, "Digital Audio
 * Restoration" (Springer, 1998), ch. 5: audio is well predicted from its recent past by a low-order AR
 * model, a click is not, so it shows as a burst in the prediction error e[n] = x[n] + Σ_k a_k·x[n−k].
 *
 * Per channel, the stream is judged in stretches of 200 ms, each with WINDOW_SECONDS of signal either side,
 * so every event is judged with its surroundings on both sides (never at the edge of a block):
 *  1. a pre-screen on the second difference d[n] = x[n] − 2x[n−1] + x[n−2] (a fixed predictor of slowly
 *     varying signal, in which a click is impulsive too), in chunks of 2.5 ms: sample n is a candidate when
 *     |d[n]| exceeds PRESCREEN_RATIO × the mean |d| of the louder chunk beside its own. Steady music, noise
 *     and nearly all of speech give none, so the costly stages run on a few per cent of the signal at most;
 *  2. around each candidate (±WINDOW_SECONDS: about 1500 samples at 48 kHz, where Godsill & Rayner fit
 *     ~1000–2000 at 44.1 kHz), AR(16) fitted by the autocorrelation method (Hann window, Levinson–Durbin)
 *     to the signal without the candidates' samples, so a click cannot shape the model meant to expose it
 *     (Godsill & Rayner estimate the model without the corrupted samples for this);
 *  3. the residual scaled by a robust local level, σ = 1.4826 × the median |e| around the candidate (MAD);
 *     samples with |e| / σ above `clickThresholdDb` (as 20·log10) are flagged, and flagged samples closer
 *     than p apart are one event, which must start where the pre-screen fired;
 *  4. the event is a click when it is impulsive relative to its surroundings: it lasts at most 5 ms (+ the p
 *     samples of residual a spike leaves), its peak stands NEIGHBOUR_DB above every other residual peak in
 *     the window (voiced speech leaves a pulse every pitch period, all alike), and the residual level is
 *     about the same before and after it (within LEVEL_STEP_DB: the burst that opens a sound, or a sound
 *     cut into silence, is a step) — unless the peak stands the threshold above the louder side as well.
 *
 * False alarms at the default threshold, 10 minutes each (scripts/click-false-alarms.ts, 2026-12-05): pink
 * noise 0; espeak-ng speech 0 (the block-wise detector before this one: 18, nearly all at block edges);
 * other sentences in four other espeak-ng voices, dithered, 1 (after a sample sox clipped on a crest).
 *
 * Streaming with bounded state: 200 ms plus two windows of signal per channel; the clicks kept for messages
 * are capped per channel and any beyond the cap are still counted.
 */
import type { Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { channelLabel, formatTimestamp } from "./findings.ts";
import { createLevelKernels, type LevelKernels } from "./levelKernels.ts";

/** AR model order: 16 predicts speech and music well at 44.1/48 kHz (Godsill & Rayner use 10–40). */
export const CLICK_AR_ORDER = 16;
/** Stretch of the stream whose candidates are judged at a time (its window either side comes with it). */
const STRETCH_SECONDS = 0.2;
/** Half the window around a candidate for the AR fit, the local level and the neighbour test (16 ms: a pitch period of the lowest voices fits within). */
const WINDOW_SECONDS = 0.016;
/** The pre-screen works in chunks of 2.5 ms … */
const CHUNK_SECONDS = 0.0025;
/**
 * … and a sample's |d| must exceed this many times the mean |d| of the louder chunk beside its own, at the
 * default threshold (measured on espeak-ng speech: clicks 12 dB over the speech pass, the voice's own pulses
 * do not). A lower threshold lowers it alike, so fainter clicks reach the AR stage.
 */
const PRESCREEN_RATIO = 15;
/** The threshold PRESCREEN_RATIO belongs to (the default `clickThresholdDb`), and the pre-screen's floor. */
const PRESCREEN_AT_DB = 40;
const PRESCREEN_MIN_RATIO = 2;
/** An event must start within this many samples of the pre-screen's candidates. */
const START_SLACK = 4;
/** The residual level over this span before and after a click is compared (5 ms). */
const CONTEXT_SECONDS = 0.005;
/** … and may differ by at most this much: more is the onset or end of a sound, not a click (common practice). */
export const LEVEL_STEP_DB = 18;
/** A click's residual peak must stand this far above the window's other residual peaks (common practice). */
export const NEIGHBOUR_DB = 12;
/** Longest disturbance still called a click (issue #18: about 0.02–5 ms). */
export const CLICK_MAX_SECONDS = 0.005;
/** MAD → standard deviation for Gaussian residuals. */
const MAD_TO_SIGMA = 1.4826;
/** Scale floor (about −120 dBFS): a click in digital silence stands out of nothing at all. */
const SCALE_FLOOR = 1e-6;
/** Clicks kept per channel for messages; more are counted. */
const MAX_KEPT = 1000;

export interface ClickEvent {
  channel: number;
  startFrame: number;
  /** Exclusive. */
  endFrame: number;
  /** Largest |e| / σ in the click, dB. */
  prominenceDb: number;
}

export interface ClickDetector {
  push(input: Float32Array[], frames: number): void;
  /** Findings (one per kept click) and the per-channel totals. */
  finish(): { findings: Finding[]; counts: number[] };
}

/**
 * `onCandidate` hears of each click as it is found, before the findings are made at the end (close-ups keep
 * its samples). `kernels`: "auto" runs the pre-screen's first pass in the WebAssembly SIMD kernel where the
 * runtime has one, "js" always in JavaScript (the same results bit for bit; tests compare the two).
 */
export function createClickDetector(
  sampleRateHz: number,
  channels: number,
  settings: Pick<AnalysisSettings, "clickThresholdDb">,
  onCandidate: ((startFrame: number, endFrame: number) => void) | null = null,
  kernels: "auto" | "js" = "auto",
): ClickDetector {
  return new ArResidualClickDetector(sampleRateHz, channels, settings.clickThresholdDb, onCandidate, kernels === "auto");
}

class ArResidualClickDetector implements ClickDetector {
  private readonly p = CLICK_AR_ORDER;
  /** Frames judged per pass (the stretch), the window half-width (also the margin either side) and their sum. */
  private readonly stretch: number;
  private readonly half: number;
  private readonly spanFrames: number;
  private readonly chunk: number;
  private readonly maxClickFrames: number;
  private readonly contextFrames: number;
  private readonly ratio: number;
  private readonly prescreenRatio: number;
  private readonly neighbourRatio = 10 ** (NEIGHBOUR_DB / 20);
  private readonly stepRatio = 10 ** (LEVEL_STEP_DB / 20);
  /** The SIMD kernels, or null for the JavaScript loops (asked for "js", or no WebAssembly SIMD here). */
  private readonly kernels: LevelKernels | null;
  /**
   * Per channel: p samples of history, then the span: margin, stretch, margin. Float32 like the decoded
   * input, so filling it is a copy, not a conversion; every read widens to double as before. With the
   * kernels, these and the chunk sums and maxima live in their memory (byte offsets below).
   */
  private readonly buffers: Float32Array[];
  private readonly bufferAt: number[] = [];
  private readonly chunkSumAt: number[] = [];
  private readonly chunkMaxAt: number[] = [];
  /** Span samples present; the margin before the stream's start is silence. */
  private fill: number;
  /** Absolute frame of span index 0 (buffer index p). */
  private spanStart: number;
  /** Per channel and pre-screen chunk of the span: the sum and the largest of |d|. */
  private readonly chunkSum: Float64Array[];
  private readonly chunkMax: Float64Array[];
  /** Chunks of the span whose sums are known (those of the margins, carried over from the last span). */
  private chunksDone = 0;
  // Scratch, shared by channels; indexed by span position unless said otherwise.
  /** Candidate positions of the span, in order; those of the stretch are judged, all are kept out of fits. */
  private readonly candidates: Int32Array;
  private readonly residual: Float64Array;
  /** From the start of a stretch between candidates: the Hann-windowed signal for the fit. */
  private readonly fitData: Float64Array;
  /** For medians. */
  private readonly scratch: Float64Array;
  private readonly r: Float64Array;
  private readonly a: Float64Array;
  private readonly aPrev: Float64Array;
  /** Per channel: end frame of the last click, or −1. */
  private readonly lastEnd: Float64Array;
  private readonly kept: ClickEvent[][];
  private readonly counts: number[];

  constructor(
    private readonly sampleRateHz: number,
    private readonly channels: number,
    thresholdDb: number,
    private readonly onCandidate: ((startFrame: number, endFrame: number) => void) | null,
    useKernels: boolean,
  ) {
    const p = this.p;
    // Margins and stretch are whole chunks, so chunks fall at the same frames in every span.
    const L = (this.chunk = Math.max(p, Math.round(CHUNK_SECONDS * sampleRateHz)));
    this.half = L * Math.ceil(Math.max(4 * p, Math.round(WINDOW_SECONDS * sampleRateHz)) / L);
    this.stretch = L * Math.max(1, Math.round((STRETCH_SECONDS * sampleRateHz) / L));
    this.spanFrames = this.stretch + 2 * this.half;
    this.maxClickFrames = Math.max(1, Math.round(CLICK_MAX_SECONDS * sampleRateHz));
    this.contextFrames = Math.max(8, Math.round(CONTEXT_SECONDS * sampleRateHz));
    this.ratio = 10 ** (thresholdDb / 20);
    this.prescreenRatio = Math.max(PRESCREEN_MIN_RATIO, PRESCREEN_RATIO * Math.min(1, 10 ** ((thresholdDb - PRESCREEN_AT_DB) / 20)));
    const chunks = this.spanFrames / L;
    const align = (bytes: number) => Math.ceil(bytes / 16) * 16;
    let at = 0;
    for (let c = 0; c < channels; c++) {
      this.bufferAt.push(at);
      at += align(4 * (p + this.spanFrames));
      this.chunkSumAt.push(at);
      at += align(8 * chunks);
      this.chunkMaxAt.push(at);
      at += align(8 * chunks);
    }
    // The span's size is fixed, so the memory is made at its full size once.
    const kernels = (this.kernels = useKernels ? createLevelKernels(at) : null);
    if (kernels) {
      const memory = kernels.memory.buffer;
      this.buffers = this.bufferAt.map((b) => new Float32Array(memory, b, p + this.spanFrames));
      this.chunkSum = this.chunkSumAt.map((b) => new Float64Array(memory, b, chunks));
      this.chunkMax = this.chunkMaxAt.map((b) => new Float64Array(memory, b, chunks));
    } else {
      this.buffers = Array.from({ length: channels }, () => new Float32Array(p + this.spanFrames));
      this.chunkSum = Array.from({ length: channels }, () => new Float64Array(chunks));
      this.chunkMax = Array.from({ length: channels }, () => new Float64Array(chunks));
    }
    this.fill = this.half;
    this.spanStart = -this.half;
    this.candidates = new Int32Array(this.spanFrames);
    this.residual = new Float64Array(this.spanFrames);
    this.fitData = new Float64Array(this.spanFrames);
    this.scratch = new Float64Array(this.spanFrames);
    this.r = new Float64Array(p + 1);
    this.a = new Float64Array(p + 1);
    this.aPrev = new Float64Array(p + 1);
    this.lastEnd = new Float64Array(channels).fill(-1);
    this.kept = Array.from({ length: channels }, () => []);
    this.counts = new Array<number>(channels).fill(0);
  }

  push(input: Float32Array[], frames: number): void {
    let at = 0;
    const p = this.p;
    while (at < frames) {
      const n = Math.min(frames - at, this.spanFrames - this.fill);
      for (let c = 0; c < this.channels; c++) this.buffers[c].set(input[c].subarray(at, at + n), p + this.fill);
      this.fill += n;
      at += n;
      if (this.fill === this.spanFrames) {
        this.processSpan(this.spanFrames);
        const shift = this.stretch / this.chunk;
        for (let c = 0; c < this.channels; c++) {
          this.buffers[c].copyWithin(0, this.stretch, p + this.spanFrames);
          this.chunkSum[c].copyWithin(0, shift);
          this.chunkMax[c].copyWithin(0, shift);
        }
        this.chunksDone = this.spanFrames / this.chunk - shift;
        this.spanStart += this.stretch;
        this.fill -= this.stretch;
      }
    }
  }

  /** Judges the stretch [half, half + stretch) of the span, of which `end` samples are present. */
  private processSpan(end: number): void {
    for (let c = 0; c < this.channels; c++) {
      const count = this.prescreen(c, end);
      if (count > 0) this.analyse(c, end, count);
    }
  }

  /**
   * Candidates of the span into `candidates`; returns their count. A first pass keeps only each chunk's
   * sum and largest |d|; a chunk whose largest stands the pre-screen ratio above its louder neighbour's
   * mean is then scanned for the samples that do.
   */
  private prescreen(c: number, end: number): number {
    const p = this.p;
    const x = this.buffers[c];
    const L = this.chunk;
    const sums = this.chunkSum[c];
    const maxima = this.chunkMax[c];
    const chunks = Math.ceil(end / L);
    const done = this.chunksDone;
    // The same first pass in the SIMD kernel, over the same memory, when there is one.
    if (this.kernels && chunks > done) this.kernels.diffChunks(this.bufferAt[c] + 4 * (done * L + p), end - done * L, L, this.chunkSumAt[c] + 8 * done, this.chunkMaxAt[c] + 8 * done);
    for (let q = this.kernels ? chunks : done; q < chunks; q++) {
      const to = Math.min(end, (q + 1) * L) + p;
      // The two samples before n ride in locals (one load a sample instead of three), and two partial sums
      // halve the chain of dependent additions. For integer PCM every |d| is a multiple of 2^(1−bits) and the
      // sums stay far inside 53 bits, so they are exact in any order; float input may differ in the last bit.
      let sumA = 0;
      let sumB = 0;
      let max = 0;
      let n = q * L + p;
      let x2 = x[n - 2];
      let x1 = x[n - 1];
      for (; n + 1 < to; n += 2) {
        const x0 = x[n];
        const y0 = x[n + 1];
        const v = Math.abs(x0 - 2 * x1 + x2);
        const w = Math.abs(y0 - 2 * x0 + x1);
        sumA += v;
        sumB += w;
        if (v > max) max = v;
        if (w > max) max = w;
        x2 = x0;
        x1 = y0;
      }
      if (n < to) {
        const v = Math.abs(x[n] - 2 * x1 + x2);
        sumA += v;
        if (v > max) max = v;
      }
      const sum = sumA + sumB;
      sums[q] = sum;
      maxima[q] = max;
    }
    const cand = this.candidates;
    const first = p - this.spanStart;
    let count = 0;
    for (let q = 0; q < chunks; q++) {
      if (maxima[q] === 0) continue;
      // The louder neighbour's mean (a sound's onset next to silence is measured against the sound; the
      // last chunk may be short).
      const before = q > 0 ? sums[q - 1] / L : 0;
      const after = q + 1 < chunks ? sums[q + 1] / Math.min(L, end - (q + 1) * L) : 0;
      const limit = this.prescreenRatio * (before > after ? before : after);
      if (maxima[q] <= limit) continue;
      const to = Math.min(end, (q + 1) * L);
      for (let j = Math.max(q * L, first); j < to; j++) {
        const n = p + j;
        const d = x[n] - 2 * x[n - 1] + x[n - 2];
        if ((d < 0 ? -d : d) > limit) cand[count++] = j;
      }
    }
    return count;
  }

  /**
   * The stretch's candidates closer than p apart are one cluster; clusters whose windows overlap share
   * one region, which gets one AR fit and residual. Each cluster is then judged in its own window.
   */
  private analyse(c: number, end: number, count: number): void {
    const p = this.p;
    const W = this.half;
    const cand = this.candidates;
    const stretchEnd = W + this.stretch;
    let k = 0;
    while (k < count && cand[k] < W) k++;
    // Candidates in the margin before, for the fit: from the first within reach of the region.
    let fitFrom = 0;
    while (k < count && cand[k] < stretchEnd) {
      // One region: clusters until the next one's window starts past this region's end.
      const regionFirst = k;
      let regionEnd = Math.min(end, cand[k] + W + 1);
      let last = k;
      while (last + 1 < count && cand[last + 1] < stretchEnd && cand[last + 1] - W <= regionEnd) {
        last++;
        regionEnd = Math.min(end, cand[last] + W + 1);
      }
      const lo = Math.max(0, cand[regionFirst] - W);
      const hi = regionEnd;
      while (cand[fitFrom] + p <= lo) fitFrom++;
      let fitTo = last + 1;
      while (fitTo < count && cand[fitTo] - 1 < hi) fitTo++;
      this.fit(c, lo, hi, fitFrom, fitTo);
      this.filter(c, lo, hi);
      // Clusters of the region, in order.
      let i = regionFirst;
      while (i <= last) {
        let j = i;
        while (j + 1 <= last && cand[j + 1] - cand[j] <= p) j++;
        this.judge(c, cand[i], cand[j], Math.max(lo, cand[i] - W), Math.min(hi, cand[j] + W + 1));
        i = j + 1;
      }
      k = last + 1;
    }
  }

  /**
   * AR(p) by the autocorrelation method on x[lo, hi) without the candidates (those of the margins too):
   * the stretches between them (each candidate's sample before it and p after it, a click's ringing, left
   * out) are Hann-windowed on their own and their autocorrelations summed. Setting the candidates to zero
   * in one window instead would leave sharp edges in the data, whose leakage caps the prediction of
   * steady tones near 40 dB.
   */
  private fit(c: number, lo: number, hi: number, firstCandidate: number, endCandidate: number): void {
    const p = this.p;
    const x = this.buffers[c];
    this.r.fill(0);
    const cand = this.candidates;
    let from = lo;
    let used = 0;
    for (let k = firstCandidate; k <= endCandidate; k++) {
      const to = k < endCandidate ? Math.min(hi, Math.max(lo, cand[k] - 1)) : hi;
      if (to - from > 2 * p) {
        this.accumulate(x, from, to);
        used += to - from;
      }
      if (k < endCandidate) from = Math.max(from, Math.min(hi, cand[k] + p));
    }
    // Candidates everywhere: the whole region, click and all (its residual is then understated).
    if (used === 0) this.accumulate(x, lo, hi);
    if (!this.levinson()) {
      this.a.fill(0);
      this.a[0] = 1;
    }
  }

  /** Adds the autocorrelation of x[from, to) (span positions), Hann-windowed, to r. */
  private accumulate(x: Float32Array, from: number, to: number): void {
    const p = this.p;
    const n = to - from;
    const f = this.fitData;
    // Hann window by a rotating phasor (no cos per sample): w[i] = 0.5 − 0.5·cos(2π(i + ½)/n).
    const step = (2 * Math.PI) / n;
    const cd = Math.cos(step);
    const sd = Math.sin(step);
    let cs = Math.cos(step / 2);
    let sn = Math.sin(step / 2);
    for (let i = 0; i < n; i++) {
      const v = x[p + from + i];
      f[i] = v * (0.5 - 0.5 * cs);
      const t = cs * cd - sn * sd;
      sn = sn * cd + cs * sd;
      cs = t;
    }
    const r = this.r;
    for (let k = 0; k <= p; k++) {
      let s = 0;
      for (let i = k; i < n; i++) s += f[i] * f[i - k];
      r[k] += s;
    }
  }

  /** The residual |e| on [lo, hi) through the prediction error filter in `a`. */
  private filter(c: number, lo: number, hi: number): void {
    const p = this.p;
    const x = this.buffers[c];
    const a = this.a;
    const e = this.residual;
    for (let i = lo; i < hi; i++) {
      const n = p + i;
      let y = x[n];
      for (let k = 1; k <= p; k++) y += a[k] * x[n - k];
      e[i] = Math.abs(y);
    }
  }

  /**
   * The cluster [first, last] (span positions) in its window [lo, hi): the local level without the
   * cluster, the event that starts at it, and the tests of step 4.
   */
  private judge(c: number, first: number, last: number, lo: number, hi: number): void {
    const p = this.p;
    const e = this.residual;
    // The local level: MAD of the window's non-zero residual outside the cluster (exact zeros are digital
    // silence and say nothing of the signal's level).
    const m = this.scratch;
    let n = 0;
    const skipFrom = first - p;
    const skipTo = last + p;
    for (let i = lo; i < hi; i++) {
      if (i >= skipFrom && i <= skipTo) continue;
      const v = e[i];
      if (v !== 0) m[n++] = v;
    }
    const sigma = n >= 2 * p ? Math.max(SCALE_FLOOR, MAD_TO_SIGMA * medianInPlace(m, n)) : SCALE_FLOOR;
    const limit = this.ratio * sigma;
    let start = -1;
    const startTo = Math.min(hi, last + START_SLACK + 1);
    for (let i = Math.max(lo, first - START_SLACK); i < startTo; i++) {
      if (e[i] > limit) {
        start = i;
        break;
      }
    }
    if (start < 0) return;
    let end = start;
    let peak = e[start];
    for (let i = start + 1; i < hi && i - end <= p; i++) {
      if (e[i] > limit) {
        end = i;
        if (e[i] > peak) peak = e[i];
      }
    }
    end++;
    const frameStart = this.spanStart + start;
    const frameEnd = this.spanStart + end;
    // Within reach of the last click (its ringing, or a cluster the pre-screen split): part of it.
    const k = this.kept[c];
    if (this.lastEnd[c] >= 0 && frameStart - this.lastEnd[c] <= p) {
      if (frameEnd > this.lastEnd[c]) {
        this.lastEnd[c] = frameEnd;
        if (k.length > 0 && k[k.length - 1].endFrame >= frameStart - p) k[k.length - 1].endFrame = frameEnd;
      }
      return;
    }
    if (end - start > this.maxClickFrames + p) return;
    // Alone in its window: no other residual peak within NEIGHBOUR_DB of it.
    let elsewhere = 0;
    const a = Math.max(lo, start - p);
    const b = Math.min(hi, end + p);
    for (let i = lo; i < a; i++) if (e[i] > elsewhere) elsewhere = e[i];
    for (let i = b; i < hi; i++) if (e[i] > elsewhere) elsewhere = e[i];
    if (peak < this.neighbourRatio * elsewhere) return;
    // The residual level just before and after: a click leaves the signal as it found it, while the burst
    // that opens a sound (a stop consonant, a note's attack) is followed by more of it, and a sound cut
    // into digital silence has none after. "After" starts where the longest click would have ended, past
    // the ringing a click may leave (a decaying resonance is part of it). A step is still a click when the
    // peak stands the threshold above the louder side too (a click in the pause just before a word). NaN
    // (not at hand, at the stream's end) passes.
    const before = rms(e, start - p - this.contextFrames, start - p, lo, hi);
    const afterFrom = Math.max(end, start + this.maxClickFrames) + p;
    const after = rms(e, afterFrom, afterFrom + this.contextFrames, lo, hi);
    const louder = after > before ? after : before;
    if ((after > this.stepRatio * before || before > this.stepRatio * after) && !(peak >= this.ratio * louder)) return;
    this.lastEnd[c] = frameEnd;
    this.counts[c]++;
    if (k.length < MAX_KEPT) {
      k.push({ channel: c, startFrame: frameStart, endFrame: frameEnd, prominenceDb: 20 * Math.log10(peak / sigma) });
      this.onCandidate?.(frameStart, frameEnd);
    }
  }

  /**
   * Levinson–Durbin on r[0..p]: a[0] = 1, prediction error filter A(z) = 1 + Σ a_k z^−k. False when the
   * window is silent or the recursion breaks down (then the residual is the signal itself).
   */
  private levinson(): boolean {
    const p = this.p;
    const r = this.r;
    const a = this.a;
    const prev = this.aPrev;
    if (!(r[0] > 0)) return false;
    // A touch of white noise on the diagonal (−90 dB) keeps the recursion stable on pure tones.
    let err = r[0] * (1 + 1e-9);
    a.fill(0);
    a[0] = 1;
    for (let i = 1; i <= p; i++) {
      let acc = r[i];
      for (let j = 1; j < i; j++) acc += a[j] * r[i - j];
      const k = -acc / err;
      if (!Number.isFinite(k) || Math.abs(k) >= 1) return i > 1;
      prev.set(a);
      for (let j = 1; j < i; j++) a[j] = prev[j] + k * prev[i - j];
      a[i] = k;
      err *= 1 - k * k;
      if (!(err > 0)) return true;
    }
    return true;
  }

  finish(): { findings: Finding[]; counts: number[] } {
    // The last stretch, without a margin after it.
    if (this.fill > this.half) this.processSpan(this.fill);
    const fs = this.sampleRateHz;
    const p = this.p;
    const findings: Finding[] = [];
    for (let c = 0; c < this.channels; c++) {
      const total = this.counts[c];
      this.kept[c].forEach((k, i) => {
        const start = k.startFrame / fs;
        findings.push({
          code: "click",
          severity: "warn",
          channel: c,
          startSeconds: start,
          endSeconds: k.endFrame / fs,
          message:
            `click ${i + 1} of ${total} on ${channelLabel(c)} at ${formatTimestamp(start)}: ` +
            `its prediction residual stands ${k.prominenceDb.toFixed(1)} dB above the local level (AR(${p}) model)`,
        });
      });
    }
    return { findings, counts: this.counts.slice() };
  }
}

/** RMS of v over [from, to) clipped to [min, max); NaN when under 8 values remain. */
function rms(v: Float64Array, from: number, to: number, min: number, max: number): number {
  const lo = Math.max(min, from);
  const hi = Math.min(max, to);
  if (hi - lo < 8) return NaN;
  let s = 0;
  for (let i = lo; i < hi; i++) s += v[i] * v[i];
  return Math.sqrt(s / (hi - lo));
}

/** Median of v[0 … n) by quickselect; reorders v. */
function medianInPlace(v: Float64Array, n: number): number {
  const k = n >> 1;
  let lo = 0;
  let hi = n - 1;
  while (lo < hi) {
    const pivot = v[(lo + hi) >> 1];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (v[i] < pivot) i++;
      while (v[j] > pivot) j--;
      if (i <= j) {
        const t = v[i];
        v[i] = v[j];
        v[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else break;
  }
  return v[k];
}
