/**
 * Clicks: short impulsive disturbances (about 0.02–5 ms) that stand out of the local signal. The method is
 * the autoregressive (AR) prediction-residual detector of S. J. Godsill and P. J. W. Rayner, "Digital Audio
 * Restoration" (Springer, 1998), ch. 5: audio is well predicted from its recent past by a low-order AR
 * model, a click is not, so it shows as a burst in the prediction error e[n] = x[n] + Σ_k a_k·x[n−k].
 *
 * Per channel, in blocks of 40 ms:
 *  1. a gate: only a block whose second difference has an outlier (max over mean ≥ GATE_RATIO) can hold a
 *     click; steady music and noise skip the rest (a click is impulsive in any high-pass view);
 *  2. AR(16) fitted by the autocorrelation method (Hann window, Levinson–Durbin) to the block with its
 *     outliers clipped; the previous block's model is tried too, the one leaving less residual wins, so a
 *     click cannot shape the model meant to expose it;
 *  3. the residual scaled by a robust local level, σ = 1.4826 × its median absolute value (MAD), which a
 *     few click samples cannot move; samples with |e| / σ above `clickThresholdDb` (as 20·log10) are
 *     flagged, and flagged samples closer than p apart are one event;
 *  4. an event is a click when it lasts at most 5 ms (+ the p samples of residual a spike leaves), stands
 *     NEIGHBOUR_DB above every other residual peak of the block (voiced speech leaves a pulse every pitch
 *     period, all alike) and leaves the residual level as it found it (within LEVEL_STEP_DB: a sound's
 *     onset out of a pause is followed by more of it).
 *
 * Streaming with bounded state: one block of history per channel; the clicks kept for messages are capped
 * per channel and any beyond the cap are still counted.
 */
import type { Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { channelLabel, formatTimestamp } from "./findings.ts";

/** AR model order: 16 predicts speech and music well at 44.1/48 kHz (Godsill & Rayner use 10–40). */
export const CLICK_AR_ORDER = 16;
/** Block length for the AR fit and the local scale (40 ms; Godsill & Rayner fit ~1000–2000 samples at 44.1 kHz). */
const BLOCK_SECONDS = 0.04;
/** The gate (see mayHoldClick): max |second difference| over its block mean. */
const GATE_RATIO = 12;
/** The previous block's model is tried only when the residual reaches this share of the threshold (−12 dB). */
const SUSPECT_FRACTION = 0.25;
/** Samples beyond this many robust standard deviations are clipped for the AR fit. */
const CLIP_SIGMAS = 8;
/** The residual level over this span before and after a click is compared (5 ms). */
const CONTEXT_SECONDS = 0.005;
/** … and may differ by at most this much: more is the onset or end of a sound, not a click (common practice). */
export const LEVEL_STEP_DB = 18;
/** A click's residual peak must stand this far above the block's other residual peaks (common practice). */
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

/** `onCandidate` hears of each click as it is found, before the findings are made at the end (close-ups keep its samples). */
export function createClickDetector(
  sampleRateHz: number,
  channels: number,
  settings: Pick<AnalysisSettings, "clickThresholdDb">,
  onCandidate: ((startFrame: number, endFrame: number) => void) | null = null,
): ClickDetector {
  return new ArResidualClickDetector(sampleRateHz, channels, settings.clickThresholdDb, onCandidate);
}

class ArResidualClickDetector implements ClickDetector {
  private readonly p = CLICK_AR_ORDER;
  private readonly blockFrames: number;
  private readonly maxClickFrames: number;
  private readonly ratio: number;
  /** Per channel: p samples of history, then the block being filled. */
  private readonly buffers: Float64Array[];
  private fill = 0;
  /** Absolute frame of buffer index p (the block's first sample). */
  private blockStart = 0;
  // Scratch, shared by channels.
  private readonly r: Float64Array;
  private readonly a: Float64Array;
  private readonly aPrev: Float64Array;
  private readonly residual: Float64Array;
  private readonly magnitude: Float64Array;
  private readonly clipped: Float64Array;
  private readonly window: Float64Array;
  /** This block's own residual and model while the previous model is tried. */
  private readonly ownResidual: Float64Array;
  private readonly ownModel: Float64Array;
  /** Per channel: the model of the last block analysed. */
  private readonly models: Float64Array[];
  private readonly hasModel: Uint8Array;
  /** Per channel: end frame of the last click, or −1. */
  private readonly lastEnd: Float64Array;
  /** Per channel: the local level of the last block with signal (SCALE_FLOOR before any). */
  private readonly lastSigma: Float64Array;
  private readonly neighbourRatio = 10 ** (NEIGHBOUR_DB / 20);
  private readonly stepRatio = 10 ** (LEVEL_STEP_DB / 20);
  private readonly contextFrames: number;
  private readonly kept: ClickEvent[][];
  private readonly counts: number[];

  constructor(
    private readonly sampleRateHz: number,
    private readonly channels: number,
    thresholdDb: number,
    private readonly onCandidate: ((startFrame: number, endFrame: number) => void) | null = null,
  ) {
    this.blockFrames = Math.max(4 * this.p, Math.round(BLOCK_SECONDS * sampleRateHz));
    this.maxClickFrames = Math.max(1, Math.round(CLICK_MAX_SECONDS * sampleRateHz));
    this.contextFrames = Math.max(8, Math.round(CONTEXT_SECONDS * sampleRateHz));
    this.ratio = 10 ** (thresholdDb / 20);
    this.buffers = Array.from({ length: channels }, () => new Float64Array(this.p + this.blockFrames));
    this.r = new Float64Array(this.p + 1);
    this.a = new Float64Array(this.p + 1);
    this.aPrev = new Float64Array(this.p + 1);
    this.residual = new Float64Array(this.blockFrames);
    this.magnitude = new Float64Array(this.blockFrames);
    this.clipped = new Float64Array(this.blockFrames);
    this.window = new Float64Array(this.blockFrames);
    this.ownResidual = new Float64Array(this.blockFrames);
    this.ownModel = new Float64Array(this.p + 1);
    this.models = Array.from({ length: channels }, () => new Float64Array(this.p + 1));
    this.hasModel = new Uint8Array(channels);
    for (let i = 0; i < this.blockFrames; i++) this.window[i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * (i + 0.5)) / this.blockFrames);
    this.lastEnd = new Float64Array(channels).fill(-1);
    this.lastSigma = new Float64Array(channels).fill(SCALE_FLOOR);
    this.kept = Array.from({ length: channels }, () => []);
    this.counts = new Array<number>(channels).fill(0);
  }

  push(input: Float32Array[], frames: number): void {
    let at = 0;
    const p = this.p;
    while (at < frames) {
      const n = Math.min(frames - at, this.blockFrames - this.fill);
      for (let c = 0; c < this.channels; c++) {
        const buf = this.buffers[c];
        const x = input[c];
        for (let i = 0; i < n; i++) buf[p + this.fill + i] = x[at + i];
      }
      this.fill += n;
      at += n;
      if (this.fill === this.blockFrames) this.processBlock(this.blockFrames);
    }
  }

  private processBlock(length: number): void {
    for (let c = 0; c < this.channels; c++) {
      if (this.mayHoldClick(c, length)) this.detect(c, length);
    }
    const p = this.p;
    for (let c = 0; c < this.channels; c++) {
      const buf = this.buffers[c];
      buf.copyWithin(0, length, length + p);
    }
    this.blockStart += length;
    this.fill = 0;
  }

  /**
   * The gate that keeps the AR fit off most blocks: a click is impulsive in the second difference too
   * (d[n] = x[n] − 2x[n−1] + x[n−2], a fixed predictor of slowly varying signal), so a block whose largest
   * |d| is under GATE_RATIO × its mean |d| holds none. Noise reaches about 4×, tones π/2.
   */
  private mayHoldClick(c: number, length: number): boolean {
    const x = this.buffers[c];
    const p = this.p;
    let sum = 0;
    let max = 0;
    for (let n = p; n < p + length; n++) {
      const d = Math.abs(x[n] - 2 * x[n - 1] + x[n - 2]);
      sum += d;
      if (d > max) max = d;
    }
    if (max === 0) return false;
    return max > GATE_RATIO * (sum / length) || sum === max;
  }

  /**
   * Fits AR(p) to the block of channel c, scales the residual by its MAD and judges the outliers. The fit
   * is kept from being shaped by the click it should expose (Godsill & Rayner fit iteratively for this):
   * samples beyond 8 robust standard deviations are clipped for it, and the previous block's model is
   * tried as well, the one with the smaller residual level winning.
   */
  private detect(c: number, length: number): void {
    const p = this.p;
    const x = this.buffers[c];
    const m = this.magnitude;
    for (let i = 0; i < length; i++) m[i] = Math.abs(x[p + i]);
    const clip = CLIP_SIGMAS * MAD_TO_SIGMA * medianInPlace(m, length);
    let sigma = this.fitAndFilter(c, length, clip);
    // The previous block's model too, and whichever leaves the smaller residual level: a click that
    // shaped this block's fit is exposed by the model from before it, while a changing signal keeps its own.
    if (this.hasModel[c] === 1 && this.maxResidual(length) > SUSPECT_FRACTION * this.ratio * sigma) {
      const own = this.ownResidual;
      own.set(this.residual.subarray(0, length));
      const ownModel = this.ownModel;
      ownModel.set(this.a);
      const ownLast = this.lastSigma[c];
      this.a.set(this.models[c]);
      const previous = this.filter(c, length);
      if (previous < sigma) sigma = previous;
      else {
        this.residual.set(own.subarray(0, length));
        this.a.set(ownModel);
        this.lastSigma[c] = ownLast;
      }
    }
    this.models[c].set(this.a);
    this.hasModel[c] = 1;
    const e = this.residual;
    const limit = this.ratio * sigma;
    // The stream's first p samples are predicted from silence before it: a file that starts mid-signal is no click.
    let i = this.blockStart === 0 ? p : 0;
    while (i < length) {
      if (e[i] <= limit) {
        i++;
        continue;
      }
      // One event: flagged samples closer than p apart.
      const start = i;
      let last = i;
      let peak = e[i];
      for (i++; i < length && i - last <= p; i++) {
        if (e[i] > limit) {
          last = i;
          if (e[i] > peak) peak = e[i];
        }
      }
      this.judge(c, start, last + 1, peak, sigma, length);
    }
  }

  /**
   * An event is a click when it is short and stands out of its neighbourhood too: its peak at least
   * NEIGHBOUR_DB above the largest residual elsewhere in the block (outside the event and p samples either
   * side). Voiced speech leaves a residual pulse every pitch period, all alike; a click stands alone.
   */
  private judge(c: number, start: number, end: number, peak: number, sigma: number, length: number): void {
    const frameStart = this.blockStart + start;
    const frameEnd = this.blockStart + end;
    // The tail of a click in the previous block, carried by the AR history: part of that click.
    const k = this.kept[c];
    if (this.lastEnd[c] >= 0 && frameStart - this.lastEnd[c] <= this.p) {
      this.lastEnd[c] = frameEnd;
      if (k.length > 0 && k[k.length - 1].endFrame >= frameStart - this.p) k[k.length - 1].endFrame = frameEnd;
      return;
    }
    if (end - start > this.maxClickFrames + this.p) return;
    const e = this.residual;
    const p = this.p;
    let elsewhere = 0;
    const lo = Math.max(0, start - p);
    const hi = Math.min(length, end + p);
    for (let i = 0; i < lo; i++) if (e[i] > elsewhere) elsewhere = e[i];
    for (let i = hi; i < length; i++) if (e[i] > elsewhere) elsewhere = e[i];
    if (peak < this.neighbourRatio * elsewhere) return;
    // The residual level just before and just after: a click leaves the signal as it found it, while the
    // burst that opens a sound (a stop consonant, a note's attack) is followed by more of it.
    const before = rms(e, start - p - this.contextFrames, start - p, length);
    const after = rms(e, end + p, end + p + this.contextFrames, length);
    // Digital silence on one side only (a word out of or into a pause) is a step too; NaN: not at hand.
    if (after > this.stepRatio * before || before > this.stepRatio * after) return;
    this.lastEnd[c] = frameEnd;
    this.counts[c]++;
    if (k.length < MAX_KEPT) {
      k.push({ channel: c, startFrame: frameStart, endFrame: frameEnd, prominenceDb: 20 * Math.log10(peak / sigma) });
      this.onCandidate?.(frameStart, frameEnd);
    }
  }

  /** The AR fit (clipped, Hann-windowed autocorrelation) and the residual |e| into `residual`; returns σ. */
  private fitAndFilter(c: number, length: number, clip: number): number {
    const p = this.p;
    const x = this.buffers[c];
    const r = this.r;
    const clipped = this.clipped;
    const w = this.window;
    // Hann-windowed, as in linear prediction practice: an unwindowed block's edges bias the fit enough to
    // cap the prediction of steady tones at about 50 dB.
    for (let i = 0; i < length; i++) {
      const v = x[p + i];
      clipped[i] = (clip > 0 ? (v > clip ? clip : v < -clip ? -clip : v) : v) * w[i];
    }
    for (let k = 0; k <= p; k++) {
      let s = 0;
      for (let i = k; i < length; i++) s += clipped[i] * clipped[i - k];
      r[k] = s;
    }
    if (!this.levinson()) {
      this.a.fill(0);
      this.a[0] = 1;
    }
    return this.filter(c, length);
  }

  private maxResidual(length: number): number {
    const e = this.residual;
    let max = 0;
    for (let i = 0; i < length; i++) if (e[i] > max) max = e[i];
    return max;
  }

  /** The residual |e| of the block through the prediction error filter in `a`; returns σ. */
  private filter(c: number, length: number): number {
    const p = this.p;
    const x = this.buffers[c];
    const a = this.a;
    const e = this.residual;
    const m = this.magnitude;
    let nonZero = 0;
    for (let i = 0; i < length; i++) {
      const n = p + i;
      let y = x[n];
      for (let k = 1; k <= p; k++) y += a[k] * x[n - k];
      e[i] = Math.abs(y);
      // Exact zeros (digital silence in the block) say nothing of the signal's level: left out of the median.
      if (y !== 0) m[nonZero++] = Math.abs(y);
    }
    // With (nearly) all the block digital silence, the level is the last block's that had signal: the edge
    // of a word that ends or starts in the block stands out of nothing, but not out of its own speech. 2p
    // non-zero residuals are more than one click leaves (p + its own length), so then the block sets the scale.
    if (nonZero > 2 * p + this.maxClickFrames) {
      const sigma = Math.max(SCALE_FLOOR, MAD_TO_SIGMA * medianInPlace(m, nonZero));
      this.lastSigma[c] = sigma;
      return sigma;
    }
    return this.lastSigma[c];
  }

  /**
   * Levinson–Durbin on r[0..p]: a[0] = 1, prediction error filter A(z) = 1 + Σ a_k z^−k. False when the
   * block is silent or the recursion breaks down (then the residual is the signal itself).
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
    const p = this.p;
    if (this.fill > 2 * p) {
      this.processBlock(this.fill);
    }
    const fs = this.sampleRateHz;
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

/** RMS of v over [from, to) clipped to [0, limit); NaN when under 8 values remain. */
function rms(v: Float64Array, from: number, to: number, limit: number): number {
  const lo = Math.max(0, from);
  const hi = Math.min(limit, to);
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
