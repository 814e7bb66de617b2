/**
 * Momentary and short-term loudness between the 100 ms block starts: EBU Tech 3341 (v3, 2016 revision;
 * the v4 cases keep these definitions, from memory), Table 1, cases 9–14, synthesised here from their
 * definitions. A 1 kHz sine at X dBFS peak in both channels of a stereo pair reads X LUFS (BS.1770-4,
 * Annex 1: the −0.691 dB constant cancels the K-weighting gain at 1 kHz and two channels add 3.01 dB), so
 * each level below is also the expected loudness. Tolerance ±0.1 LU, as Tech 3341 gives for these cases.
 *
 * Cases 9 and 12 are fixed by arithmetic (their two levels and durations are the only pair that averages
 * to −23.0 LUFS); the variant layouts of cases 10, 11, 13 and 14 (onsets spread over a 100 ms block,
 * 20 level steps from −38 to −19) are from memory of the document's description.
 */
import { describe, expect, it } from "vitest";
import { createLoudnessMeter, type LoudnessResult } from "../../shared/src/analysis/loudness.ts";
import { powerToLufs } from "../../shared/src/analysis/loudnessGating.ts";
import { concat, silence, sine, sineSteps } from "../fixtures/synth.ts";
import { recordAccuracy } from "../helpers/accuracyLog.ts";

const TOLERANCE_LU = 0.1;
const REFERENCE = "EBU Tech 3341, Table 1";

interface Hop {
  endFrame: number;
  momentaryLufs: number;
  shortTermLufs: number;
}

function measure(channels: Float32Array[], rateHz: number, blockFrames = 4096): { result: LoudnessResult; hops: Hop[] } {
  const hops: Hop[] = [];
  const meter = createLoudnessMeter(rateHz, channels.length, undefined, (endFrame, m, s) =>
    hops.push({ endFrame, momentaryLufs: powerToLufs(m), shortTermLufs: powerToLufs(s) }),
  );
  const frames = channels[0].length;
  for (let at = 0; at < frames; at += blockFrames) {
    const n = Math.min(blockFrames, frames - at);
    meter.push(channels.map((x) => x.subarray(at, at + n)), n);
  }
  return { result: meter.finish(), hops };
}

const stereo = (x: Float32Array) => [x, x];
const tone = (rateHz: number, seconds: number, dbfs: number) => sine({ frequencyHz: 1000, sampleRateHz: rateHz, seconds, peakDbfs: dbfs });
const gap = (rateHz: number, seconds: number) => silence({ sampleRateHz: rateHz, seconds });

function check(measureName: string, caseName: string, expected: number, measured: number): void {
  const passed = Math.abs(measured - expected) <= TOLERANCE_LU;
  // Cases 9 and 12 follow from arithmetic; the variant layouts of 10, 11, 13 and 14 are from memory (see the
  // top). The README's table names the document only; this file says which parts were recalled.
  recordAccuracy({
    measure: measureName,
    case: caseName,
    reference: REFERENCE,
    expected: `${expected.toFixed(1)} LUFS`,
    measured,
    unit: "LUFS",
    tolerance: `±${TOLERANCE_LU} LU`,
    passed,
  });
  expect(Math.abs(measured - expected), `${caseName}: measured ${measured.toFixed(3)} LUFS`).toBeLessThanOrEqual(TOLERANCE_LU);
}

/** Momentary (400 ms window) and short-term (3 s window) are checked alike; only the window and names differ. */
const SCALES = {
  momentary: { key: "momentaryLufs", maxKey: "maxMomentaryLufs", windowSeconds: 0.4, measure: "momentary loudness" },
  shortTerm: { key: "shortTermLufs", maxKey: "maxShortTermLufs", windowSeconds: 3, measure: "short-term loudness" },
} as const;
type Scale = (typeof SCALES)[keyof typeof SCALES];

/** Cases 9 and 12: alternating levels whose every full window reads −23.0; the worst 5 ms hop after `settleSeconds`. */
function constantAfter(scale: Scale, steps: [number, number][], settleSeconds: number, minHops: number, caseName: string): void {
  const rate = 48000;
  const { hops } = measure(stereo(sineSteps({ frequencyHz: 1000, sampleRateHz: rate, steps })), rate);
  const after = hops.filter((h) => h.endFrame >= settleSeconds * rate);
  expect(after.length).toBeGreaterThan(minHops);
  let worst = -23;
  for (const h of after) if (Math.abs(h[scale.key] + 23) > Math.abs(worst + 23)) worst = h[scale.key];
  check(scale.measure, caseName, -23, worst);
}

/** Cases 10 and 13: one window-long burst at −23 dBFS, its onset moved across a 100 ms block in 20 variants. */
function burstAtAnyOnset(scale: Scale, caseNumber: number, onsetStep: number, onsetOffset: number): void {
  for (const rate of [48000, 44100]) {
    it.each(Array.from({ length: 20 }, (_, k) => k + 1))(`${rate} Hz, variant %i`, (variant) => {
      // Onsets spread over one 100 ms block, each at a different place within a 5 ms hop too.
      const onset = 1 + (variant - 1) * onsetStep + onsetOffset;
      const x = concat(gap(rate, onset), tone(rate, scale.windowSeconds, -23), gap(rate, 1));
      const { result } = measure(stereo(x), rate);
      check(`max ${scale.measure}`, `case ${caseNumber}-${variant} (${rate / 1000} kHz)`, -23, result[scale.maxKey]);
    });
  }
}

/** Cases 11 and 14: 20 window-long tones from −38 to −19 dBFS, each tone's maximum reading its own level. */
function stepsReadOwnLevel(scale: Scale, caseNumber: number, pauseSeconds: (k: number) => number): void {
  const rate = 48000;
  const toneFrames = Math.round(scale.windowSeconds * rate);
  const parts: Float32Array[] = [];
  const spans: { level: number; from: number; to: number }[] = [];
  let at = 0;
  for (let k = 0; k < 20; k++) {
    const level = -38 + k;
    const pause = pauseSeconds(k);
    parts.push(gap(rate, pause), tone(rate, scale.windowSeconds, level));
    at += Math.round(pause * rate);
    spans.push({ level, from: at, to: at + toneFrames });
    at += toneFrames;
  }
  parts.push(gap(rate, 1));
  const { hops } = measure(stereo(concat(...parts)), rate);
  for (const { level, from, to } of spans) {
    let best = -Infinity;
    for (const h of hops) if (h.endFrame > from && h.endFrame <= to + toneFrames) best = Math.max(best, h[scale.key]);
    check(scale.measure, `case ${caseNumber}: step at ${level} LUFS`, level, best);
  }
}

describe("EBU Tech 3341 case 9: short-term loudness constant at −23.0 LUFS after 3 s", () => {
  it("1.34 s at −20 dBFS and 1.66 s at −30 dBFS, alternating: every 3 s window reads −23.0", () => {
    const steps: [number, number][] = [];
    for (let k = 0; k < 5; k++) steps.push([-20, 1.34], [-30, 1.66]);
    constantAfter(SCALES.shortTerm, steps, 3, 2000, "case 9: S constant after 3 s (worst 5 ms hop)");
  });
});

describe("EBU Tech 3341 case 10: max short-term −23.0 LUFS for a 3 s burst at any onset (20 variants)", () => {
  burstAtAnyOnset(SCALES.shortTerm, 10, 0.00513, 0.0013);
});

describe("EBU Tech 3341 case 11: short-term loudness of 20 steps from −38 to −19 LUFS", () => {
  it("each 3 s tone's short-term maximum reads its own level", () => {
    // 3.2 s of silence between tones (from memory the tones are separated): each window holds one tone.
    stepsReadOwnLevel(SCALES.shortTerm, 11, (k) => 3.2 + 0.0037 * k);
  });
});

describe("EBU Tech 3341 case 12: momentary loudness constant at −23.0 LUFS after 1 s", () => {
  it("0.18 s at −20 dBFS and 0.22 s at −30 dBFS, alternating: every 400 ms window reads −23.0", () => {
    const steps: [number, number][] = [];
    for (let k = 0; k < 25; k++) steps.push([-20, 0.18], [-30, 0.22]);
    constantAfter(SCALES.momentary, steps, 1, 1500, "case 12: M constant after 1 s (worst 5 ms hop)");
  });
});

describe("EBU Tech 3341 case 13: max momentary −23.0 LUFS for a 400 ms burst at any onset (20 variants)", () => {
  burstAtAnyOnset(SCALES.momentary, 13, 0.00509, 0.0027);
});

describe("EBU Tech 3341 case 14: momentary loudness of 20 steps from −38 to −19 LUFS", () => {
  it("each 400 ms tone's momentary maximum reads its own level", () => {
    stepsReadOwnLevel(SCALES.momentary, 14, (k) => 0.6 + 0.0041 * k);
  });
});

describe("the fine hop leaves the gating blocks and block-size independence alone", () => {
  it("gating blocks stay one per 100 ms and are readable; maxima agree for blocks of 1, 333 and 65536 frames", () => {
    const rate = 44100;
    const x = concat(gap(rate, 0.5037), tone(rate, 0.4, -20), gap(rate, 3.2));
    const runs = [1, 333, 65536].map((b) => {
      const meter = createLoudnessMeter(rate, 1);
      for (let at = 0; at < x.length; at += b) meter.push([x.subarray(at, Math.min(x.length, at + b))], Math.min(b, x.length - at));
      return { meter, result: meter.finish() };
    });
    // 4.1037 s: 41 sub-blocks complete, 38 momentary blocks (from the 4th) and 12 short-term blocks (from the 30th).
    expect(runs[0].meter.momentaryBlockPowers().length).toBe(38);
    expect(runs[0].meter.shortTermBlockPowers().length).toBe(12);
    for (const r of runs.slice(1)) {
      expect(Math.abs(r.result.maxMomentaryLufs - runs[0].result.maxMomentaryLufs)).toBeLessThan(1e-9);
      expect(r.result.maxMomentaryFrame).toBe(runs[0].result.maxMomentaryFrame);
    }
    // One channel at −20 dBFS peak reads −23.01 LUFS; the fine hop finds the whole burst.
    expect(Math.abs(runs[0].result.maxMomentaryLufs - (-20 - 3.01))).toBeLessThan(0.05);
  });
});
