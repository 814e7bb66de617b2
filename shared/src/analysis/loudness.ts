/**
 * Streaming loudness per ITU-R BS.1770-4 and EBU Tech 3341/3342: K-weighting, mean square per 100 ms
 * sub-block, 400 ms momentary blocks and 3 s short-term blocks every 100 ms (75 % / 96.7 % overlap),
 * integrated loudness with the absolute and relative gates, and loudness range from the short-term blocks.
 *
 * The maxima of momentary and short-term loudness are taken on a finer 5 ms hop: each 100 ms sub-block is
 * the sum of 20 "hop" sums, and a 400 ms / 3 s window ending at every hop boundary is summed from the last
 * 80 / 600 of them. A burst between 100 ms block starts then loses at most 2.5 ms of its 400 ms window
 * (−0.03 LU) instead of 50 ms (−0.58 LU). The gating blocks of integrated loudness and LRA stay on the
 * 100 ms grid the standards define.
 */
import { FrameGrid, Float64Series } from "./frameGrid.ts";
import { kWeightingHighPass, kWeightingShelf } from "./kWeighting.ts";
import { createLevelKernels, type LevelKernels } from "./levelKernels.ts";
import { integratedLoudnessLufs, loudnessRangeLu, powerToLufs } from "./loudnessGating.ts";
import { loudnessChannelWeights } from "./speakers.ts";

export interface LoudnessResult {
  integratedLufs: number;
  maxMomentaryLufs: number;
  maxShortTermLufs: number;
  /** Null when no short-term block passes the gates (e.g. files under 3 s). */
  loudnessRangeLu: number | null;
  /** Frame at the start of the loudest 400 ms window (on the 5 ms hop grid), or null. */
  maxMomentaryFrame: number | null;
}

export interface LoudnessMeter {
  push(channels: Float32Array[], frames: number): void;
  finish(): LoudnessResult;
  /** Powers of the 400 ms gating blocks so far, one per 100 ms (live view; loudness = powerToLufs). */
  momentaryBlockPowers(): Float64Array;
  /** Powers of the 3 s short-term blocks so far, one per 100 ms (live view). */
  shortTermBlockPowers(): Float64Array;
}

/**
 * Called at every 5 ms hop boundary with the weighted mean-square powers of the 400 ms and 3 s windows
 * ending there (0 until the stream is that long; loudness = powerToLufs(power)). For loudness curves.
 */
export type LoudnessHopListener = (endFrame: number, momentaryPower: number, shortTermPower: number) => void;

/** Gating blocks advance by 100 ms: 75 % overlap of 400 ms (BS.1770-4, Annex 1) and ≥ 10 Hz short-term (EBU Tech 3342). */
const SUB_BLOCK_SECONDS = 0.1;
/** 400 ms momentary = 4 sub-blocks (EBU Tech 3341, 2.1); 3 s short-term = 30 (EBU Tech 3341, 2.1). */
const MOMENTARY_SUB_BLOCKS = 4;
const SHORT_TERM_SUB_BLOCKS = 30;
/** Hops per sub-block for the maxima: 5 ms, so a window misses at most 2.5 ms of a burst (≤ 0.03 LU at 400 ms). */
const HOPS_PER_SUB_BLOCK = 20;
const MOMENTARY_HOPS = MOMENTARY_SUB_BLOCKS * HOPS_PER_SUB_BLOCK;
const SHORT_TERM_HOPS = SHORT_TERM_SUB_BLOCKS * HOPS_PER_SUB_BLOCK;
/** Filter states this small are flushed to zero so long silences do not run on subnormal arithmetic. */
const SUBNORMAL_GUARD = 1e-150;
/**
 * Filter state per channel pair, as the WebAssembly kernel keeps it (a lane per channel): s1, s2 (shelf),
 * t1, t2 (high-pass), Σy² of the hop, each two f64. Channel c is lane c & 1 of pair c >> 1.
 */
const PAIR_SLOT = 10;
const SLOT_S1 = 0;
const SLOT_S2 = 2;
const SLOT_T1 = 4;
const SLOT_T2 = 6;
const SLOT_SUM = 8;
/** Frames copied into the kernel's memory at a time (32 KiB a channel). */
const STAGE_FRAMES = 8192;

/** The weights follow the one channel-layout rule of speakers.ts, which silence's LFE follows too. */
export { loudnessChannelWeights };

/**
 * `filters`: "auto" runs channel pairs through the WebAssembly SIMD kernel where the runtime has one, "js"
 * always through the JavaScript loops (the same results bit for bit; tests compare the two).
 */
export function createLoudnessMeter(
  sampleRateHz: number,
  channels: number,
  weights = loudnessChannelWeights(channels),
  onHop: LoudnessHopListener | null = null,
  filters: "auto" | "js" = "auto",
): LoudnessMeter {
  if (weights.length !== channels) {
    throw new Error(`loudness needs one weight per channel: ${channels} channels, ${weights.length} weights`);
  }
  return new KWeightedLoudnessMeter(sampleRateHz, channels, weights, onHop, filters === "auto" && channels >= 2);
}

class KWeightedLoudnessMeter implements LoudnessMeter {
  private readonly shelf;
  private readonly highPass;
  /**
   * Per channel pair (PAIR_SLOT): shelf s1, s2, high-pass t1, t2 (transposed direct form II) and Σy² of the
   * current hop, carried across blocks so any block size sums alike. In the kernel's memory when there is one.
   */
  private readonly state: Float64Array;
  /** Byte offsets in the kernel's memory: coefficients, then STAGE_FRAMES of each paired channel. */
  private readonly coefficientsAt: number = 0;
  private readonly stageAt: number = 0;
  private readonly stage: Float32Array | null = null;
  /** The SIMD kernels, or null for the JavaScript loops. */
  private readonly kernels: LevelKernels | null;
  private readonly grid: FrameGrid;
  private readonly ringEnergy = new Float64Array(SHORT_TERM_SUB_BLOCKS);
  private readonly ringFrames = new Float64Array(SHORT_TERM_SUB_BLOCKS);
  /** Weighted energy and frames of the last SHORT_TERM_HOPS hops, for the maxima. */
  private readonly hopEnergy = new Float64Array(SHORT_TERM_HOPS);
  private readonly hopFrames = new Float64Array(SHORT_TERM_HOPS);
  private hopsCompleted = 0;
  /** Suffix sums: from each hop to the end of its sub-block (set when the sub-block completes). */
  private readonly suffixEnergy = new Float64Array(SHORT_TERM_HOPS);
  private readonly suffixFrames = new Float64Array(SHORT_TERM_HOPS);
  /** Energy and frames of the current sub-block so far (its completed hops). */
  private partialEnergy = 0;
  private partialFrames = 0;
  /** The last 3 and 29 whole sub-blocks, and the last 4 and 30 (the windows ending on a sub-block boundary). */
  private recentEnergy3 = 0;
  private recentFrames3 = 0;
  private recentEnergy29 = 0;
  private recentFrames29 = 0;
  private lastMomentaryEnergy = 0;
  private lastMomentaryFrames = 0;
  private lastShortTermEnergy = 0;
  private lastShortTermFrames = 0;
  private sumEnergy = 0;
  private sumFrames = 0;
  private completed = 0;
  private position = 0;
  private subBlockStart = 0;
  private subBlockEnd: number;
  private hopEnd: number;
  private readonly momentary = new Float64Series();
  private readonly shortTerm = new Float64Series();
  private maxMomentary = 0;
  private maxMomentaryFrame: number | null = null;
  private maxShortTerm = 0;

  constructor(
    sampleRateHz: number,
    private readonly channels: number,
    private readonly weights: Float64Array,
    private readonly onHop: LoudnessHopListener | null,
    useKernels: boolean,
  ) {
    this.shelf = kWeightingShelf(sampleRateHz);
    this.highPass = kWeightingHighPass(sampleRateHz);
    const pairs = Math.ceil(channels / 2);
    const paired = channels - (channels % 2);
    // Blocks go through a stage of fixed size, so the memory is made at its full size once.
    const kernels = (this.kernels = useKernels ? createLevelKernels(pairs * PAIR_SLOT * 8 + 64 + paired * STAGE_FRAMES * 4) : null);
    if (kernels) {
      this.coefficientsAt = pairs * PAIR_SLOT * 8;
      this.stageAt = this.coefficientsAt + 64;
      const { b0, b1, b2, a1, a2 } = this.shelf;
      new Float64Array(kernels.memory.buffer, this.coefficientsAt, 7).set([b0, b1, b2, a1, a2, this.highPass.a1, this.highPass.a2]);
      this.state = new Float64Array(kernels.memory.buffer, 0, pairs * PAIR_SLOT).fill(0);
      this.stage = new Float32Array(kernels.memory.buffer, this.stageAt, paired * STAGE_FRAMES);
    } else this.state = new Float64Array(pairs * PAIR_SLOT);
    this.grid = new FrameGrid(sampleRateHz, SUB_BLOCK_SECONDS);
    this.subBlockEnd = this.grid.boundary(1);
    this.hopEnd = this.hopBoundary(1);
  }

  /** End of hop `k` of the current sub-block: the sub-block split evenly, so 20 hops tile it exactly. */
  private hopBoundary(k: number): number {
    return this.subBlockStart + Math.round((k * (this.subBlockEnd - this.subBlockStart)) / HOPS_PER_SUB_BLOCK);
  }

  momentaryBlockPowers(): Float64Array {
    return this.momentary.values();
  }

  shortTermBlockPowers(): Float64Array {
    return this.shortTerm.values();
  }

  push(input: Float32Array[], frames: number): void {
    const kernels = this.kernels;
    if (kernels === null) {
      this.filterFrames(input, 0, frames);
      return;
    }
    // Pairs of channels go through the kernel from its memory, STAGE_FRAMES at a time.
    const stage = this.stage as Float32Array;
    const paired = this.channels - (this.channels % 2);
    for (let from = 0; from < frames; from += STAGE_FRAMES) {
      const n = Math.min(STAGE_FRAMES, frames - from);
      for (let c = 0; c < paired; c++) stage.set(input[c].subarray(from, from + n), c * STAGE_FRAMES);
      this.filterFrames(input, from, n);
    }
  }

  /** Frames [from, from + count) of the input, hop by hop. */
  private filterFrames(input: Float32Array[], from: number, count: number): void {
    const kernels = this.kernels;
    let at = 0;
    while (at < count) {
      const n = Math.min(count - at, this.hopEnd - this.position);
      // Pairs of channels share one loop (or one SIMD kernel): two independent recursions overlap in the CPU
      // (the biquads are latency-bound). Each channel's arithmetic is unchanged, so results are the same.
      let c = 0;
      if (kernels) {
        for (; c + 1 < this.channels; c += 2) {
          kernels.kweightPair(this.stageAt + (c * STAGE_FRAMES + at) * 4, this.stageAt + ((c + 1) * STAGE_FRAMES + at) * 4, n, (c >> 1) * PAIR_SLOT * 8, this.coefficientsAt);
        }
      } else for (; c + 1 < this.channels; c += 2) this.filterSegmentPair(c, input[c], input[c + 1], from + at, n);
      if (c < this.channels) this.filterSegment(c, input[c], from + at, n);
      at += n;
      this.position += n;
      if (this.position === this.hopEnd) this.completeHop();
    }
  }

  /** Both K-weighting stages over x[from, from+n), adding y² into the channel's sub-block sum. */
  private filterSegment(c: number, x: Float32Array, from: number, n: number): void {
    const { b0, b1, b2, a1, a2 } = this.shelf;
    const ha1 = this.highPass.a1;
    const ha2 = this.highPass.a2;
    const st = this.state;
    const o = (c >> 1) * PAIR_SLOT + (c & 1);
    let s1 = st[o + SLOT_S1];
    let s2 = st[o + SLOT_S2];
    let t1 = st[o + SLOT_T1];
    let t2 = st[o + SLOT_T2];
    let sum = st[o + SLOT_SUM];
    const end = from + n;
    for (let i = from; i < end; i++) {
      const v = x[i];
      const y1 = b0 * v + s1;
      s1 = b1 * v - a1 * y1 + s2;
      s2 = b2 * v - a2 * y1;
      // Stage 2 numerator is 1, −2, 1.
      const y2 = y1 + t1;
      t1 = -2 * y1 - ha1 * y2 + t2;
      t2 = y1 - ha2 * y2;
      sum += y2 * y2;
    }
    st[o + SLOT_S1] = s1;
    st[o + SLOT_S2] = s2;
    st[o + SLOT_T1] = t1;
    st[o + SLOT_T2] = t2;
    st[o + SLOT_SUM] = sum;
  }

  private filterSegmentPair(c: number, x: Float32Array, z: Float32Array, from: number, n: number): void {
    const { b0, b1, b2, a1, a2 } = this.shelf;
    const ha1 = this.highPass.a1;
    const ha2 = this.highPass.a2;
    const st = this.state;
    const o = (c >> 1) * PAIR_SLOT;
    let s1 = st[o + SLOT_S1];
    let s2 = st[o + SLOT_S2];
    let t1 = st[o + SLOT_T1];
    let t2 = st[o + SLOT_T2];
    let sum = st[o + SLOT_SUM];
    let q1 = st[o + SLOT_S1 + 1];
    let q2 = st[o + SLOT_S2 + 1];
    let u1 = st[o + SLOT_T1 + 1];
    let u2 = st[o + SLOT_T2 + 1];
    let sumZ = st[o + SLOT_SUM + 1];
    const end = from + n;
    for (let i = from; i < end; i++) {
      const v = x[i];
      const y1 = b0 * v + s1;
      s1 = b1 * v - a1 * y1 + s2;
      s2 = b2 * v - a2 * y1;
      const y2 = y1 + t1;
      t1 = -2 * y1 - ha1 * y2 + t2;
      t2 = y1 - ha2 * y2;
      sum += y2 * y2;
      const w = z[i];
      const g1 = b0 * w + q1;
      q1 = b1 * w - a1 * g1 + q2;
      q2 = b2 * w - a2 * g1;
      const g2 = g1 + u1;
      u1 = -2 * g1 - ha1 * g2 + u2;
      u2 = g1 - ha2 * g2;
      sumZ += g2 * g2;
    }
    st[o + SLOT_S1] = s1;
    st[o + SLOT_S2] = s2;
    st[o + SLOT_T1] = t1;
    st[o + SLOT_T2] = t2;
    st[o + SLOT_SUM] = sum;
    st[o + SLOT_S1 + 1] = q1;
    st[o + SLOT_S2 + 1] = q2;
    st[o + SLOT_T1 + 1] = u1;
    st[o + SLOT_T2 + 1] = u2;
    st[o + SLOT_SUM + 1] = sumZ;
  }

  private completeHop(): void {
    let energy = 0;
    const st = this.state;
    for (let c = 0; c < this.channels; c++) {
      const at = (c >> 1) * PAIR_SLOT + (c & 1) + SLOT_SUM;
      energy += this.weights[c] * st[at];
      st[at] = 0;
    }
    // Flushed on the absolute hop grid, so the result does not depend on block size (the sums are 0 here).
    for (let i = 0; i < st.length; i++) if (st[i] < SUBNORMAL_GUARD && st[i] > -SUBNORMAL_GUARD) st[i] = 0;
    const hopIndex = this.hopsCompleted % HOPS_PER_SUB_BLOCK;
    const hopStart = hopIndex === 0 ? this.subBlockStart : this.hopBoundary(hopIndex);
    const slot = this.hopsCompleted % SHORT_TERM_HOPS;
    this.hopEnergy[slot] = energy;
    this.hopFrames[slot] = this.hopEnd - hopStart;
    this.hopsCompleted++;
    this.partialEnergy += energy;
    this.partialFrames += this.hopEnd - hopStart;
    if (hopIndex === HOPS_PER_SUB_BLOCK - 1) this.completeSubBlock();
    this.updateMaxima();
    this.hopEnd = this.hopBoundary((this.hopsCompleted % HOPS_PER_SUB_BLOCK) + 1);
  }

  /**
   * The 400 ms and 3 s windows ending at this hop, without re-summing 80 or 600 hops: the hops done of the
   * current sub-block, plus the whole sub-blocks before them (summed once per sub-block), plus the tail of
   * the oldest sub-block (its suffix sums, also made once per sub-block). Additions only, in a fixed order,
   * so the result is the same for any block size and nothing cancels.
   */
  private updateMaxima(): void {
    const hops = this.hopsCompleted;
    const inSubBlock = hops % HOPS_PER_SUB_BLOCK;
    let momentary = 0;
    let shortTerm = 0;
    if (hops >= MOMENTARY_HOPS) {
      let e = this.lastMomentaryEnergy;
      let f = this.lastMomentaryFrames;
      if (inSubBlock !== 0) {
        const old = (hops - MOMENTARY_HOPS) % SHORT_TERM_HOPS;
        e = this.partialEnergy + this.recentEnergy3 + this.suffixEnergy[old];
        f = this.partialFrames + this.recentFrames3 + this.suffixFrames[old];
      }
      momentary = e / f;
      if (momentary > this.maxMomentary) {
        this.maxMomentary = momentary;
        this.maxMomentaryFrame = this.position - f;
      }
    }
    if (hops >= SHORT_TERM_HOPS) {
      let e = this.lastShortTermEnergy;
      let f = this.lastShortTermFrames;
      if (inSubBlock !== 0) {
        const old = (hops - SHORT_TERM_HOPS) % SHORT_TERM_HOPS;
        e = this.partialEnergy + this.recentEnergy29 + this.suffixEnergy[old];
        f = this.partialFrames + this.recentFrames29 + this.suffixFrames[old];
      }
      shortTerm = e / f;
      if (shortTerm > this.maxShortTerm) this.maxShortTerm = shortTerm;
    }
    this.onHop?.(this.position, momentary, shortTerm);
  }

  private completeSubBlock(): void {
    // Suffix sums of this sub-block's hops, for windows that start inside it later.
    let e = 0;
    let f = 0;
    const first = this.hopsCompleted - HOPS_PER_SUB_BLOCK;
    for (let k = this.hopsCompleted - 1; k >= first; k--) {
      const slot = k % SHORT_TERM_HOPS;
      e += this.hopEnergy[slot];
      f += this.hopFrames[slot];
      this.suffixEnergy[slot] = e;
      this.suffixFrames[slot] = f;
    }
    const slot = this.completed % SHORT_TERM_SUB_BLOCKS;
    this.ringEnergy[slot] = this.partialEnergy;
    this.ringFrames[slot] = this.subBlockEnd - this.subBlockStart;
    this.partialEnergy = 0;
    this.partialFrames = 0;
    this.completed++;
    this.subBlockStart = this.subBlockEnd;
    this.subBlockEnd = this.grid.boundary(this.completed + 1);
    this.sumRecent(MOMENTARY_SUB_BLOCKS - 1);
    this.recentEnergy3 = this.sumEnergy;
    this.recentFrames3 = this.sumFrames;
    this.sumRecent(SHORT_TERM_SUB_BLOCKS - 1);
    this.recentEnergy29 = this.sumEnergy;
    this.recentFrames29 = this.sumFrames;
    if (this.completed >= MOMENTARY_SUB_BLOCKS) {
      this.sumRecent(MOMENTARY_SUB_BLOCKS);
      this.lastMomentaryEnergy = this.sumEnergy;
      this.lastMomentaryFrames = this.sumFrames;
      this.momentary.push(this.sumEnergy / this.sumFrames);
    }
    if (this.completed >= SHORT_TERM_SUB_BLOCKS) {
      this.sumRecent(SHORT_TERM_SUB_BLOCKS);
      this.lastShortTermEnergy = this.sumEnergy;
      this.lastShortTermFrames = this.sumFrames;
      this.shortTerm.push(this.sumEnergy / this.sumFrames);
    }
  }

  /** Energy and frames of the last `count` sub-blocks (summed oldest first, for reproducibility) into sumEnergy/sumFrames. */
  private sumRecent(count: number): void {
    let energy = 0;
    let frames = 0;
    for (let k = Math.max(0, this.completed - count); k < this.completed; k++) {
      const slot = k % SHORT_TERM_SUB_BLOCKS;
      energy += this.ringEnergy[slot];
      frames += this.ringFrames[slot];
    }
    this.sumEnergy = energy;
    this.sumFrames = frames;
  }

  finish(): LoudnessResult {
    // A trailing partial sub-block cannot complete a 400 ms block (BS.1770-4 gates whole blocks only).
    return {
      integratedLufs: integratedLoudnessLufs(this.momentary.values()),
      maxMomentaryLufs: powerToLufs(this.maxMomentary),
      maxShortTermLufs: powerToLufs(this.maxShortTerm),
      loudnessRangeLu: loudnessRangeLu(this.shortTerm.values()),
      maxMomentaryFrame: this.maxMomentaryFrame,
    };
  }
}
