import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { biquadPowerGain, kWeightingHighPass, kWeightingShelf } from "../../shared/src/analysis/kWeighting.ts";
import { createLoudnessMeter, loudnessChannelWeights, type LoudnessResult } from "../../shared/src/analysis/loudness.ts";
import { createLevelAnalyser } from "../../shared/src/analysis/levelAnalyser.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../../shared/src/types/settings.ts";
import { byteSourceFromBytes, createDataChunkDecoder, readWavLayout } from "../../shared/src/wav/index.ts";
import { integratedLoudnessLufs, loudnessRangeLu, lufsToPower } from "../../shared/src/analysis/loudnessGating.ts";
import { ffmpegAvailable, ffmpegEbur128 } from "../helpers/ffmpeg.ts";
import { concat, gainDb, pinkNoise, silence, sine, sineSteps, speechLike, whiteNoise } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";

function measure(channels: Float32Array[], sampleRateHz: number, blockFrames = 65536): LoudnessResult {
  const meter = createLoudnessMeter(sampleRateHz, channels.length);
  const frames = channels[0].length;
  for (let at = 0; at < frames; at += blockFrames) {
    const n = Math.min(blockFrames, frames - at);
    meter.push(channels.map((x) => x.subarray(at, at + n)), n);
  }
  return meter.finish();
}

const stereoSteps = (rateHz: number, steps: [number, number][]) => {
  const x = sineSteps({ frequencyHz: 1000, sampleRateHz: rateHz, steps });
  return [x, x];
};

describe("K-weighting", () => {
  it("reproduces BS.1770-4's published 48 kHz coefficients to 1e-6", () => {
    // ITU-R BS.1770-4, Annex 1, Table 1 (stage 1, shelving filter).
    const shelf = kWeightingShelf(48000);
    expect(Math.abs(shelf.b0 - 1.53512485958697)).toBeLessThan(1e-6);
    expect(Math.abs(shelf.b1 - -2.69169618940638)).toBeLessThan(1e-6);
    expect(Math.abs(shelf.b2 - 1.19839281085285)).toBeLessThan(1e-6);
    expect(Math.abs(shelf.a1 - -1.69065929318241)).toBeLessThan(1e-6);
    expect(Math.abs(shelf.a2 - 0.73248077421585)).toBeLessThan(1e-6);
    // ITU-R BS.1770-4, Annex 1, Table 2 (stage 2, high-pass), numerator 1, −2, 1.
    const hp = kWeightingHighPass(48000);
    expect([hp.b0, hp.b1, hp.b2]).toEqual([1, -2, 1]);
    expect(Math.abs(hp.a1 - -1.99004745483398)).toBeLessThan(1e-6);
    expect(Math.abs(hp.a2 - 0.99007225036621)).toBeLessThan(1e-6);
  });

  it.each([44100, 48000, 96000, 192000])("at %i Hz its gain at 997 Hz is the +0.691 dB the loudness offset cancels", (rateHz) => {
    // ITU-R BS.1770-4, Annex 1: the −0.691 constant makes a 997 Hz sine read its RMS level, i.e. K(997 Hz) ≈ +0.691 dB.
    // Away from 48 kHz the derived filter follows its analog prototype, which the 48 kHz table only approximates
    // (measured 0.017 dB at 96 kHz, 0.027 dB at 192 kHz): 0.05 dB keeps well inside EBU Tech 3341's ±0.1 LU.
    const db = 10 * Math.log10(biquadPowerGain(kWeightingShelf(rateHz), 997, rateHz) * biquadPowerGain(kWeightingHighPass(rateHz), 997, rateHz));
    expect(Math.abs(db - 0.691)).toBeLessThan(0.05);
  });

  it("the derived filters agree across sample rates below 10 kHz (bilinear prototype, 0.05 dB)", () => {
    for (const f of [20, 100, 1000, 2000, 5000, 10000]) {
      const k = (rate: number) => 10 * Math.log10(biquadPowerGain(kWeightingShelf(rate), f, rate) * biquadPowerGain(kWeightingHighPass(rate), f, rate));
      expect(Math.abs(k(44100) - k(48000))).toBeLessThan(0.05);
      expect(Math.abs(k(96000) - k(48000))).toBeLessThan(0.05);
    }
  });
});

describe("integrated loudness: EBU Tech 3341 test cases 1–5 (stereo 1 kHz sine sequences, ±0.1 LU)", () => {
  // EBU Tech 3341 (2016), Table 1, cases 1–5: per-channel peak levels and durations; expected −23.0 or −33.0 LUFS
  // (levels from memory; they follow from the definition since a 1 kHz stereo sine at X dBFS reads X LUFS).
  const cases: { name: string; steps: [number, number][]; expectedLufs: number }[] = [
    { name: "1: −23 dBFS, 20 s", steps: [[-23, 20]], expectedLufs: -23 },
    { name: "2: −33 dBFS, 20 s", steps: [[-33, 20]], expectedLufs: -33 },
    { name: "3: −36/−23/−36 dBFS, 10/60/10 s", steps: [[-36, 10], [-23, 60], [-36, 10]], expectedLufs: -23 },
    { name: "4: −72/−36/−23/−36/−72 dBFS, 10/10/60/10/10 s", steps: [[-72, 10], [-36, 10], [-23, 60], [-36, 10], [-72, 10]], expectedLufs: -23 },
    { name: "5: −26/−20/−26 dBFS, 20/20.1/20 s", steps: [[-26, 20], [-20, 20.1], [-26, 20]], expectedLufs: -23 },
  ];
  for (const rateHz of [48000, 44100, 96000]) {
    it.each(cases)(`${rateHz} Hz, case $name`, ({ steps, expectedLufs }) => {
      const result = measure(stereoSteps(rateHz, steps), rateHz);
      expect(Math.abs(result.integratedLufs - expectedLufs)).toBeLessThanOrEqual(0.1);
    });
  }

  it("BS.1770-4 anchor: a 0 dBFS 997 Hz sine in one of two channels reads −3.01 LKFS (Annex 1)", () => {
    const x = sine({ frequencyHz: 997, sampleRateHz: 48000, seconds: 10 });
    const result = measure([x, new Float32Array(x.length)], 48000);
    expect(Math.abs(result.integratedLufs - -3.01)).toBeLessThanOrEqual(0.05);
  });

  it("surround channels weigh 1.41 (+1.49 dB) and LFE is excluded (BS.1770-4, Annex 1, Table 3)", () => {
    const x = sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: 5, peakDbfs: -20 });
    const z = new Float32Array(x.length);
    const front = measure([x, z, z, z, z], 48000).integratedLufs;
    const surround = measure([z, z, z, x, z], 48000).integratedLufs;
    expect(Math.abs(surround - front - 10 * Math.log10(1.41))).toBeLessThan(0.01);
    expect(measure([z, z, z, x, z, z], 48000).integratedLufs).toBe(-Infinity);
  });

  it("gating: silence and a signal under −70 LUFS give −Infinity (BS.1770-4 absolute gate)", () => {
    expect(measure([silence({ sampleRateHz: 48000, seconds: 3 })], 48000).integratedLufs).toBe(-Infinity);
    const quiet = sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: 3, peakDbfs: -75 });
    expect(measure([quiet, quiet], 48000).integratedLufs).toBe(-Infinity);
  });

  it("the relative gate ignores blocks 10 LU under the absolute-gated level (BS.1770-4, Annex 1, eq. 6)", () => {
    // Two levels 20 LU apart: the quiet one is gated out, so the result is the loud one's level.
    expect(integratedLoudnessLufs(Float64Array.from([lufsToPower(-20), lufsToPower(-40)]))).toBeCloseTo(-20, 9);
    // 5 LU apart: both count, mean of powers.
    const both = 10 * Math.log10((lufsToPower(-20) + lufsToPower(-25)) / 2) - 0.691;
    expect(integratedLoudnessLufs(Float64Array.from([lufsToPower(-20), lufsToPower(-25)]))).toBeCloseTo(both, 9);
  });
});

describe("momentary and short-term maxima", () => {
  it("short-term: 20 × (1.34 s at −20 dBFS, 1.66 s at −30 dBFS) reads −23.0 LUFS (EBU Tech 3341 case 9, from memory)", () => {
    const steps: [number, number][] = [];
    for (let k = 0; k < 20; k++) steps.push([-20, 1.34], [-30, 1.66]);
    const result = measure(stereoSteps(48000, steps), 48000);
    expect(Math.abs(result.maxShortTermLufs - -23)).toBeLessThanOrEqual(0.1);
  });

  it("momentary: a 400 ms burst at −20 dBFS on the 100 ms grid reads −20.0 LUFS (definition, EBU Tech 3341 2.1)", () => {
    const rate = 48000;
    const burst = concat(silence({ sampleRateHz: rate, seconds: 1 }), sine({ frequencyHz: 1000, sampleRateHz: rate, seconds: 0.4, peakDbfs: -20 }), silence({ sampleRateHz: rate, seconds: 3 }));
    const result = measure([burst, burst], rate);
    expect(Math.abs(result.maxMomentaryLufs - -20)).toBeLessThanOrEqual(0.1);
    expect(result.maxMomentaryFrame).toBe(rate);
    // Short-term averages the burst over 3 s: −20 + 10·log10(0.4 / 3).
    expect(Math.abs(result.maxShortTermLufs - (-20 + 10 * Math.log10(0.4 / 3)))).toBeLessThanOrEqual(0.1);
  });

  it("files shorter than a block have no momentary or short-term value", () => {
    const result = measure([sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: 0.3 })], 48000);
    expect(result.maxMomentaryLufs).toBe(-Infinity);
    expect(result.maxShortTermLufs).toBe(-Infinity);
    expect(result.loudnessRangeLu).toBeNull();
  });
});

describe("loudness range: EBU Tech 3342 test cases 1–4 (stereo 1 kHz sine steps, ±1 LU)", () => {
  // EBU Tech 3342 (2016), Table 1, cases 1–4 (levels from memory; expected LRA is the step size by the definition).
  it.each([
    { steps: [[-20, 20], [-30, 20]] as [number, number][], expectedLu: 10 },
    { steps: [[-20, 20], [-15, 20]] as [number, number][], expectedLu: 5 },
    { steps: [[-40, 20], [-20, 20]] as [number, number][], expectedLu: 20 },
    { steps: [[-50, 20], [-35, 20], [-20, 20], [-35, 20], [-50, 20]] as [number, number][], expectedLu: 15 },
  ])("steps $steps → LRA $expectedLu LU", ({ steps, expectedLu }) => {
    const result = measure(stereoSteps(48000, steps), 48000);
    expect(result.loudnessRangeLu).not.toBeNull();
    expect(Math.abs((result.loudnessRangeLu ?? NaN) - expectedLu)).toBeLessThanOrEqual(1);
  });

  it("steady programme has an LRA of 0; the 10th–95th percentile ignores brief excursions (EBU Tech 3342, 3)", () => {
    const steady = Float64Array.from({ length: 1000 }, () => lufsToPower(-23));
    expect(loudnessRangeLu(steady)).toBeCloseTo(0, 9);
    // 3 % of blocks 15 LU louder: above the 95th percentile, so the range stays 0.
    const spiky = Float64Array.from({ length: 1000 }, (_, i) => lufsToPower(i % 33 === 0 ? -8 : -23));
    expect(loudnessRangeLu(spiky)).toBeCloseTo(0, 9);
  });
});

describe("block size does not change loudness", () => {
  it("blocks of 1, 997 and 65536 frames give the same results (1e-9 LU)", () => {
    const rate = 44100;
    const x = speechLike({ sampleRateHz: rate, seconds: 8, rmsDbfs: -24, seed: 2 });
    const y = pinkNoise({ sampleRateHz: rate, seconds: 8, rmsDbfs: -30, seed: 4 });
    const ref = measure([x, y], rate, 65536);
    for (const blockFrames of [1, 997]) {
      const r = measure([x, y], rate, blockFrames);
      expect(Math.abs(r.integratedLufs - ref.integratedLufs)).toBeLessThan(1e-9);
      expect(Math.abs(r.maxMomentaryLufs - ref.maxMomentaryLufs)).toBeLessThan(1e-9);
      expect(Math.abs(r.maxShortTermLufs - ref.maxShortTermLufs)).toBeLessThan(1e-9);
      expect(Math.abs((r.loudnessRangeLu ?? NaN) - (ref.loudnessRangeLu ?? NaN))).toBeLessThan(1e-9);
    }
  });
});

describe.runIf(ffmpegAvailable)("cross-check with Debian's ffmpeg ebur128 filter (independent meter)", () => {
  let dir: string;
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), "tidemark-loudness-"));
  });
  afterAll(async () => {
    await rm(dir, { recursive: true, force: true });
  });

  const signals: { name: string; rateHz: number; make: (rate: number) => Float32Array[] }[] = [
    {
      name: "speech-like stereo, 48 kHz",
      rateHz: 48000,
      make: (rate) => [speechLike({ sampleRateHz: rate, seconds: 40, rmsDbfs: -26, seed: 21 }), gainDb(speechLike({ sampleRateHz: rate, seconds: 40, rmsDbfs: -26, seed: 22 }), -2)],
    },
    {
      name: "speech-like mono, 44.1 kHz",
      rateHz: 44100,
      make: (rate) => [speechLike({ sampleRateHz: rate, seconds: 40, rmsDbfs: -20, seed: 23 })],
    },
    {
      name: "pink and white noise with level changes, 96 kHz",
      rateHz: 96000,
      make: (rate) => [
        concat(pinkNoise({ sampleRateHz: rate, seconds: 15, rmsDbfs: -28, seed: 1 }), pinkNoise({ sampleRateHz: rate, seconds: 15, rmsDbfs: -18, seed: 2 })),
        concat(whiteNoise({ sampleRateHz: rate, seconds: 15, rmsDbfs: -30, seed: 3 }), whiteNoise({ sampleRateHz: rate, seconds: 15, rmsDbfs: -24, seed: 4 })),
      ],
    },
  ];

  it.each(signals)("$name: integrated within 0.2 LU, LRA within 1 LU", async ({ name, rateHz, make }) => {
    const channels = make(rateHz);
    const path = join(dir, `${name.replace(/\W+/g, "-")}.wav`);
    await writeFile(path, encodeWav(channels, { sampleRateHz: rateHz, bitDepth: 24 }));
    // Compare with the file's quantised samples, as ffmpeg sees them (24-bit: far below these tolerances).
    const ours = measure(channels, rateHz);
    const theirs = await ffmpegEbur128(path);
    expect(Math.abs(ours.integratedLufs - theirs.integratedLufs)).toBeLessThanOrEqual(0.2);
    // EBU Tech 3342's definition is the first reference (above); ffmpeg's histogram-based LRA is a second opinion.
    expect(Math.abs((ours.loudnessRangeLu ?? NaN) - theirs.loudnessRangeLu)).toBeLessThanOrEqual(1);
  });
});

describe("channel weights (ITU-R BS.1770-4, Annex 1, Table 3: surrounds 1.41, LFE excluded)", () => {
  it("follow the WAVE_FORMAT_EXTENSIBLE speaker mask when there is one, else the default order", () => {
    // Speaker bits (Microsoft's WAVEFORMATEXTENSIBLE, from memory): FL 0x1, FR 0x2, FC 0x4, LFE 0x8,
    // BL 0x10, BR 0x20, SL 0x200, SR 0x400.
    expect(Array.from(loudnessChannelWeights(6, 0x3f))).toEqual([1, 1, 1, 0, 1.41, 1.41]); // 5.1 with back surrounds
    expect(Array.from(loudnessChannelWeights(6, 0x60f))).toEqual([1, 1, 1, 0, 1.41, 1.41]); // 5.1 with side surrounds
    expect(Array.from(loudnessChannelWeights(4, 0x33))).toEqual([1, 1, 1.41, 1.41]); // quadraphonic
    expect(Array.from(loudnessChannelWeights(3, 0x3))).toEqual([1, 1, 1]); // a channel the mask leaves out
    expect(Array.from(loudnessChannelWeights(4, null))).toEqual([1, 1, 1, 1]);
    expect(Array.from(loudnessChannelWeights(6))).toEqual([1, 1, 1, 0, 1.41, 1.41]);
    expect(Array.from(loudnessChannelWeights(6, 0))).toEqual([1, 1, 1, 0, 1.41, 1.41]); // 0: no assignment given
  });

  it("read from a real quadraphonic file: equal channels read 10·log10((2 + 2·1.41) / 4) LU louder with the mask", async () => {
    // BS.1770-4 eq. 2: L = −0.691 + 10·log10 Σ G_i·z_i. Four equal channels: weights [1, 1, 1.41, 1.41]
    // against [1, 1, 1, 1] differ by 10·log10(4.82 / 4) = 0.810 LU.
    const x = sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: 4, peakDbfs: -26 });
    async function integrated(channelMask: number): Promise<number> {
      const bytes = encodeWav([x, x, x, x], { sampleRateHz: 48000, bitDepth: 24, extensible: true, channelMask });
      const layout = await readWavLayout(byteSourceFromBytes(bytes));
      const { sampleRateHz, channels, bitDepth, encoding, totalFrames } = layout;
      const analyser = createLevelAnalyser({ sampleRateHz, channels, bitDepth, encoding, totalFrames, channelMask: layout.channelMask }, DEFAULT_ANALYSIS_SETTINGS);
      const decoder = createDataChunkDecoder(layout, 65536, (block) => analyser.push(block));
      decoder.push(bytes, 0);
      decoder.finish();
      return analyser.finish().metrics.integratedLufs!;
    }
    const quad = await integrated(0x33);
    const unassigned = await integrated(0);
    expect(quad - unassigned).toBeCloseTo(10 * Math.log10(4.82 / 4), 2);
  });
});
