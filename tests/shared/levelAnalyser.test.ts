import { describe, expect, it } from "vitest";
import { createLevelAnalyser } from "../../shared/src/analysis/levelAnalyser.ts";
import { MAX_FINDINGS_PER_CODE } from "../../shared/src/analysis/findings.ts";
import { lfeChannelIndex } from "../../shared/src/analysis/speakers.ts";
import type { LevelAnalysisResult, StreamFormat } from "../../shared/src/types/analysis.ts";
import { fileMetricsSchema, findingSchema, type FindingCode } from "../../shared/src/types/report.ts";
import { DEFAULT_ANALYSIS_SETTINGS, type AnalysisSettings } from "../../shared/src/types/settings.ts";
import { byteSourceFromBytes, createDataChunkDecoder, readWavLayout } from "../../shared/src/wav/index.ts";
import { concat, gainDb, hardClip, mix, pinkNoise, silence, sine, sineSteps, speechLike, whiteNoise } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { espeakAvailable, espeakSpeech } from "../helpers/externalAudio.ts";

const RATE = 48000;

function analyse(
  channels: Float32Array[],
  o: { sampleRateHz?: number; bitDepth?: number; encoding?: "pcm" | "float"; blockFrames?: number; settings?: Partial<AnalysisSettings>; channelMask?: number } = {},
): LevelAnalysisResult {
  const format: StreamFormat = {
    sampleRateHz: o.sampleRateHz ?? RATE,
    channels: channels.length,
    bitDepth: o.bitDepth ?? 32,
    encoding: o.encoding ?? "float",
    totalFrames: channels[0].length,
    channelMask: o.channelMask ?? null,
  };
  const analyser = createLevelAnalyser(format, { ...DEFAULT_ANALYSIS_SETTINGS, ...o.settings });
  const step = o.blockFrames ?? 65536;
  for (let at = 0; at < format.totalFrames; at += step) {
    const n = Math.min(step, format.totalFrames - at);
    analyser.push({ channels: channels.map((x) => x.subarray(at, at + n)), frames: n, startFrame: at });
  }
  return analyser.finish();
}

/** Encodes, parses and decodes a file as the CLI does, then analyses it. */
async function analyseFile(channels: Float32Array[], bitDepth: 8 | 16 | 24 | 32, encoding: "pcm" | "float" = "pcm", blockFrames = 65536): Promise<LevelAnalysisResult> {
  const bytes = encodeWav(channels, { sampleRateHz: RATE, bitDepth, encoding });
  const layout = await readWavLayout(byteSourceFromBytes(bytes));
  const analyser = createLevelAnalyser(
    { sampleRateHz: layout.sampleRateHz, channels: layout.channels, bitDepth: layout.bitDepth, encoding: layout.encoding, totalFrames: layout.totalFrames },
    DEFAULT_ANALYSIS_SETTINGS,
  );
  const decoder = createDataChunkDecoder(layout, blockFrames, (block) => analyser.push(block));
  decoder.push(bytes, 0);
  decoder.finish();
  return analyser.finish();
}

const codes = (r: LevelAnalysisResult): FindingCode[] => r.findings.map((f) => f.code);
const findingsOf = (r: LevelAnalysisResult, code: FindingCode) => r.findings.filter((f) => f.code === code);
const noise = (seconds: number, rmsDbfs: number, seed: number) => whiteNoise({ sampleRateHz: RATE, seconds, rmsDbfs, seed });

describe("full-scale facts", () => {
  it("a 16-bit full-scale sine reads 0.00 dBFS peak and −3.01 dBFS RMS (common practice)", async () => {
    const x = sine({ frequencyHz: 997, sampleRateHz: RATE, seconds: 2 });
    const { metrics } = await analyseFile([x], 16);
    expect(metrics.samplePeakDbfs).toBeCloseTo(0, 2);
    expect(metrics.rmsDbfs).toBeCloseTo(-3.01, 2);
    expect(metrics.channels[0].rmsDbfs).toBeCloseTo(-3.01, 2);
    // A sine hitting 32767 repeatedly is near full scale but not flat-topped: no clip run of 3.
    expect(metrics.clipEvents).toBe(0);
  });

  it("the loudness of EBU Tech 3341 case 1 comes through the analyser (−23.0 LUFS ±0.1)", () => {
    const x = sineSteps({ frequencyHz: 1000, sampleRateHz: RATE, steps: [[-23, 20]] });
    const { metrics } = analyse([x, x]);
    expect(Math.abs((metrics.integratedLufs ?? NaN) - -23)).toBeLessThanOrEqual(0.1);
    expect(Math.abs((metrics.maxMomentaryLufs ?? NaN) - -23)).toBeLessThanOrEqual(0.1);
    expect(Math.abs((metrics.maxShortTermLufs ?? NaN) - -23)).toBeLessThanOrEqual(0.1);
    expect(metrics.loudnessRangeLu).toBeCloseTo(0, 1);
  });

  it("true peak is never below sample peak, and a fs/4 sine at 45° reads 3 dB over its samples (BS.1770-4, Annex 2)", () => {
    const x = sine({ frequencyHz: RATE / 4, sampleRateHz: RATE, seconds: 1, peakDbfs: -6, phaseRadians: Math.PI / 4 });
    const { metrics } = analyse([x]);
    expect(metrics.truePeakDbtp ?? -Infinity).toBeGreaterThanOrEqual(metrics.samplePeakDbfs ?? Infinity);
    expect(Math.abs((metrics.truePeakDbtp ?? NaN) - (metrics.samplePeakDbfs ?? NaN) - 3.01)).toBeLessThan(0.4);
  });

  it("silence reads null levels (report contract: −Infinity is written as null)", () => {
    const { metrics } = analyse([silence({ sampleRateHz: RATE, seconds: 1 })]);
    expect(metrics.samplePeakDbfs).toBeNull();
    expect(metrics.rmsDbfs).toBeNull();
    expect(metrics.integratedLufs).toBeNull();
    expect(metrics.noiseFloorDbfs).toBeNull();
    expect(metrics.effectiveBitDepth).toBeNull();
  });

  it("metrics and findings fit the report contract's schema", () => {
    const x = hardClip(gainDb(speechLike({ sampleRateHz: RATE, seconds: 6, rmsDbfs: -12, seed: 5 }), 12));
    const result = analyse([x, gainDb(x, -6)], { encoding: "pcm", bitDepth: 24 });
    const full = { ...result.metrics, bands: { octave: [], third: [] }, bandwidthHz: null, dominantFrequencyHz: null };
    expect(() => fileMetricsSchema.parse(full)).not.toThrow();
    for (const f of result.findings) expect(() => findingSchema.parse(f)).not.toThrow();
    expect(result.findings.length).toBeGreaterThan(0);
  });
});

describe("DC offset", () => {
  it("reads the mean as % of full scale (definition), none without it", () => {
    const x = sine({ frequencyHz: 440, sampleRateHz: RATE, seconds: 2, peakDbfs: -6 });
    const withDc = x.map((v) => v + 0.005);
    expect(analyse([withDc]).metrics.dcOffsetPercent).toBeCloseTo(0.5, 3);
    expect(analyse([x]).metrics.dcOffsetPercent).toBeLessThan(0.001);
    expect(analyse([x, withDc]).metrics.channels.map((c) => c.dcOffsetPercent.toFixed(2))).toEqual(["0.00", "0.50"]);
  });
});

describe("clipping", () => {
  it("a sine driven 6 dB into full scale: clip events with samples and times (runs ≥ 3 at full scale)", async () => {
    const clean = sine({ frequencyHz: 100, sampleRateHz: RATE, seconds: 1, peakDbfs: -6 });
    const driven = hardClip(sine({ frequencyHz: 100, sampleRateHz: RATE, seconds: 1, peakDbfs: 6 }));
    const x = concat(clean, driven, clean);
    const result = await analyseFile([x], 16);
    // 100 Hz for 1 s: 200 half-cycles clipped; |2·sin θ| ≥ 1 for θ in [30°, 150°], i.e. 2/3 of each 240-sample half cycle.
    expect(result.metrics.clipEvents).toBe(200);
    expect(result.metrics.clippedSamples).toBeGreaterThan(200 * 155);
    expect(result.metrics.clippedSamples).toBeLessThan(200 * 165);
    const clips = findingsOf(result, "clipping");
    expect(clips.length).toBe(1);
    expect(clips[0].startSeconds).toBeCloseTo(1, 2);
    expect(clips[0].endSeconds).toBeCloseTo(2, 2);
    expect(clips[0].message).toMatch(/200 clipped runs/);
    expect(result.metrics.channels[0].clippedSamples).toBe(result.metrics.clippedSamples);
    expect(codes(await analyseFile([concat(clean, clean)], 16))).not.toContain("clipping");
  });

  it("runs shorter than clipRunSamples do not count", () => {
    const x = noise(1, -20, 3);
    x[1000] = 1;
    x[1001] = 1;
    x[5000] = -1;
    x[5001] = -1;
    x[5002] = -1;
    const result = analyse([x]);
    expect(result.metrics.clipEvents).toBe(1);
    expect(result.metrics.clippedSamples).toBe(3);
    expect(analyse([x], { settings: { clipRunSamples: 2 } }).metrics.clipEvents).toBe(2);
  });

  it("near-clip: peaks above −0.1 dBFS without clip runs; none at −1 dBFS", () => {
    const hot = sine({ frequencyHz: 997, sampleRateHz: RATE, seconds: 1, peakDbfs: -0.05 });
    const nearClip = findingsOf(analyse([hot]), "near-clip");
    expect(nearClip.length).toBe(1);
    expect(nearClip[0].message).toMatch(/-0\.05 dBFS/);
    expect(codes(analyse([sine({ frequencyHz: 997, sampleRateHz: RATE, seconds: 1, peakDbfs: -1 })]))).not.toContain("near-clip");
  });
});

describe("silence and dead channels", () => {
  const quiet = (s: number) => silence({ sampleRateHz: RATE, seconds: s });

  it("lead, inner gap and tail below −60 dBFS for ≥ 2 s are found with their times", () => {
    const x = concat(quiet(3), noise(5, -20, 1), gainDb(noise(3, -20, 2), -50), noise(5, -20, 3), quiet(2.5));
    const result = analyse([x, x]);
    const [lead] = findingsOf(result, "lead-silence");
    const [gap] = findingsOf(result, "silent-gap");
    const [tail] = findingsOf(result, "tail-silence");
    // Times are on the 50 ms window grid.
    expect(lead.startSeconds).toBe(0);
    expect(lead.endSeconds).toBeCloseTo(3, 1);
    expect(gap.startSeconds).toBeCloseTo(8, 1);
    expect(gap.endSeconds).toBeCloseTo(11, 1);
    expect(tail.startSeconds).toBeCloseTo(16, 1);
    expect(tail.endSeconds).toBeCloseTo(18.5, 6);
    expect(gap.message).toMatch(/3\.00 s/);
  });

  it("no silence findings in continuous signal, nor for gaps shorter than 2 s", () => {
    const x = concat(noise(3, -20, 1), quiet(1.5), noise(3, -20, 2));
    const found = codes(analyse([x]));
    expect(found).not.toContain("lead-silence");
    expect(found).not.toContain("silent-gap");
    expect(found).not.toContain("tail-silence");
  });

  it("a silent file is reported as silent throughout", () => {
    const result = analyse([quiet(1), quiet(1)]);
    expect(findingsOf(result, "lead-silence")[0].message).toMatch(/silent throughout/);
    expect(codes(result)).not.toContain("dead-channel");
  });

  it("dead channel: one channel silent while the other is not", () => {
    const result = analyse([noise(3, -20, 1), gainDb(noise(3, -20, 2), -70)]);
    const dead = findingsOf(result, "dead-channel");
    expect(dead.map((f) => f.channel)).toEqual([1]);
    expect(codes(analyse([noise(3, -20, 1), noise(3, -20, 2)]))).not.toContain("dead-channel");
  });
});

describe("dead channel and the LFE", () => {
  // Speaker bits of WAVE_FORMAT_EXTENSIBLE (Microsoft's KSAUDIO_SPEAKER definitions, from memory): FL 0x1,
  // FR 0x2, FC 0x4, LFE 0x8, BL 0x10, BR 0x20, SL 0x200, SR 0x400.
  const speech = (seed: number) => speechLike({ sampleRateHz: RATE, seconds: 4, rmsDbfs: -24, seed });
  const fiveOne = (silent: number) => Array.from({ length: 6 }, (_, c) => (c === silent ? new Float32Array(4 * RATE) : speech(40 + c)));
  const deadChannels = (r: LevelAnalysisResult) => findingsOf(r, "dead-channel").map((f) => f.channel);

  it("finds the LFE by the speaker mask, else by the default 5.1/7.1 order", () => {
    expect(lfeChannelIndex(6, 0x3f)).toBe(3);
    expect(lfeChannelIndex(6, 0x60f)).toBe(3);
    expect(lfeChannelIndex(5, 0x3b)).toBe(2); // FL FR LFE BL BR: no centre before it
    expect(lfeChannelIndex(3, 0x7)).toBeNull(); // 3.0: no LFE bit
    expect(lfeChannelIndex(6, null)).toBe(3);
    expect(lfeChannelIndex(8, 0)).toBe(3);
    expect(lfeChannelIndex(2, null)).toBeNull();
    expect(lfeChannelIndex(4, null)).toBeNull();
  });

  it("a silent LFE in 5.1 is no dead channel, with or without a mask; a silent centre is", () => {
    expect(deadChannels(analyse(fiveOne(3)))).toEqual([]);
    expect(deadChannels(analyse(fiveOne(3), { channelMask: 0x60f }))).toEqual([]);
    expect(deadChannels(analyse(fiveOne(2)))).toEqual([2]);
    // With mask 0x3b (FL FR LFE BL BR, no centre) the LFE is channel 2, so a silent channel 3 (BL) is dead.
    const noCentre = Array.from({ length: 5 }, (_, c) => (c === 3 ? new Float32Array(4 * RATE) : speech(50 + c)));
    expect(deadChannels(analyse(noCentre, { channelMask: 0x3b }))).toEqual([3]);
  });

  it("the profile setting deadChannelIncludesLfe puts the LFE back into the check", () => {
    expect(deadChannels(analyse(fiveOne(3), { settings: { deadChannelIncludesLfe: true } }))).toEqual([3]);
  });
});

describe("dropouts and stuck samples", () => {
  it("5 ms of digital zero inside signal is a dropout, with its time; clean signal has none", () => {
    const x = noise(4, -20, 4);
    x.fill(0, 96000, 96000 + 240);
    const result = analyse([x]);
    const drops = findingsOf(result, "dropout");
    expect(drops.length).toBe(1);
    expect(drops[0].startSeconds).toBeCloseTo(2, 6);
    expect(drops[0].endSeconds).toBeCloseTo(2.005, 6);
    expect(drops[0].message).toMatch(/5\.0 ms/);
    expect(codes(analyse([noise(4, -20, 4)]))).not.toContain("dropout");
  });

  it("zeros shorter than 1 ms, zeros in silence and leading zeros are not dropouts", () => {
    const short = noise(3, -20, 5);
    short.fill(0, 50000, 50000 + 40);
    expect(codes(analyse([short]))).not.toContain("dropout");
    const inSilence = concat(noise(2, -20, 6), gainDb(noise(3, -20, 7), -70), noise(2, -20, 8));
    inSilence.fill(0, 2 * RATE + 30000, 2 * RATE + 30000 + 480);
    expect(codes(analyse([inSilence]))).not.toContain("dropout");
    const leading = noise(3, -20, 9);
    leading.fill(0, 0, 480);
    expect(codes(analyse([leading]))).not.toContain("dropout");
  });

  it("an analogue transfer (noise floor everywhere) keeps its dropouts as fails, several of them", () => {
    const floor = pinkNoise({ sampleRateHz: RATE, seconds: 12, rmsDbfs: -66, seed: 61 });
    const x = mix(speechLike({ sampleRateHz: RATE, seconds: 12, rmsDbfs: -22, seed: 62 }), floor);
    // Mid-phrase positions (the speech-like signal pauses 2.6–3.2 s in every 3.2 s); at 2.0 s its syllable
    // envelope is at zero, so the run cuts into the noise floor alone: still a dropout, not a fade.
    for (const at of [1.2, 2.0, 4.5, 7.7]) x.fill(0, Math.round(at * RATE), Math.round(at * RATE) + 240);
    const result = analyse([x]);
    expect(findingsOf(result, "dropout").map((f) => Number(f.startSeconds?.toFixed(2)))).toEqual([1.2, 2.0, 4.5, 7.7]);
    expect(findingsOf(result, "digital-silence")).toEqual([]);
  });

  it("born digital: zero pauses in speech with no noise floor are digital-silence (info), not dropouts", () => {
    // speechLike pauses are exact zero: the file's quietest passages are digital silence.
    const x = speechLike({ sampleRateHz: RATE, seconds: 12, rmsDbfs: -22, seed: 63 });
    for (const at of [1.2, 4.5]) x.fill(0, Math.round(at * RATE), Math.round(at * RATE) + 240);
    const result = analyse([x]);
    expect(findingsOf(result, "dropout")).toEqual([]);
    const info = findingsOf(result, "digital-silence");
    expect(info.length).toBeGreaterThanOrEqual(2);
    expect(info.every((f) => f.severity === "info")).toBe(true);
    expect(info[0].message).toMatch(/born digital/);
  });

  it.runIf(espeakAvailable)("one sentence of espeak-ng speech (born digital, zero gaps in its stops) has no dropout", () => {
    const { sampleRateHz, samples } = espeakSpeech("The ferry leaves the harbour at nine.");
    const result = analyse([samples], { sampleRateHz });
    expect(findingsOf(result, "dropout")).toEqual([]);
    expect(findingsOf(result, "digital-silence").length).toBeGreaterThan(0);
  });

  it("a zero run the signal fades into is digital-silence even in an analogue transfer", () => {
    const x = mix(pinkNoise({ sampleRateHz: RATE, seconds: 4, rmsDbfs: -20, seed: 64 }), pinkNoise({ sampleRateHz: RATE, seconds: 4, rmsDbfs: -66, seed: 65 }));
    const start = 2 * RATE;
    const fade = Math.round(0.1 * RATE);
    for (let i = 0; i < fade; i++) x[start - fade + i] *= 1 - i / fade;
    x.fill(0, start, start + Math.round(0.02 * RATE));
    const result = analyse([x]);
    expect(findingsOf(result, "dropout")).toEqual([]);
    expect(findingsOf(result, "digital-silence")[0].message).toMatch(/fades to silence/);
    // The same run cut abruptly into the signal is a dropout.
    const cut = mix(pinkNoise({ sampleRateHz: RATE, seconds: 4, rmsDbfs: -20, seed: 64 }), pinkNoise({ sampleRateHz: RATE, seconds: 4, rmsDbfs: -66, seed: 65 }));
    cut.fill(0, start, start + Math.round(0.02 * RATE));
    expect(findingsOf(analyse([cut]), "dropout").length).toBe(1);
  });

  it("a held value for 100 samples is stuck; a quiet 16-bit 20 Hz staircase is not", async () => {
    const x = noise(2, -20, 10);
    x.fill(0.3, 40000, 40100);
    const stuck = findingsOf(analyse([x]), "stuck-samples");
    expect(stuck.length).toBe(1);
    expect(stuck[0].startSeconds).toBeCloseTo(40000 / RATE, 6);
    expect(stuck[0].message).toMatch(/for 100 samples/);
    // 20 Hz at −60 dBFS in 16 bits moves by < 1 step per sample: long runs of one code, one step apart.
    const staircase = await analyseFile([sine({ frequencyHz: 20, sampleRateHz: RATE, seconds: 2, peakDbfs: -60 })], 16);
    expect(codes(staircase)).not.toContain("stuck-samples");
    expect(codes(analyse([noise(2, -20, 11)]))).not.toContain("stuck-samples");
  });
});

describe("stereo", () => {
  const left = pinkNoise({ sampleRateHz: RATE, seconds: 4, rmsDbfs: -20, seed: 21 });

  it("inverted polarity: correlation −1 and polarity-inverted", () => {
    const result = analyse([left, left.map((v) => -v)]);
    expect(result.metrics.stereoCorrelation).toBeCloseTo(-1, 6);
    expect(codes(result)).toContain("polarity-inverted");
  });

  it("a polarity-inverted stretch inside a stereo file is found by the 1 s windows", () => {
    const right = pinkNoise({ sampleRateHz: RATE, seconds: 4, rmsDbfs: -20, seed: 22 });
    const l = concat(left, left, left);
    const r = concat(mix(gainDb(left, -1), gainDb(right, -10)), left.map((v) => -v), mix(gainDb(left, -1), gainDb(right, -10)));
    const result = analyse([l, r]);
    const inverted = findingsOf(result, "polarity-inverted");
    expect(inverted.length).toBe(1);
    expect(inverted[0].startSeconds).toBeCloseTo(4, 1);
    expect(inverted[0].endSeconds).toBeCloseTo(8, 1);
  });

  it("dual mono: bit-identical channels, and equal-level channels with correlation > 0.999", () => {
    expect(findingsOf(analyse([left, left.slice()]), "dual-mono")[0].message).toMatch(/bit-identical/);
    const nearly = mix(left, gainDb(whiteNoise({ sampleRateHz: RATE, seconds: 4, rmsDbfs: -20, seed: 3 }), -40));
    const result = analyse([left, nearly]);
    expect(result.metrics.stereoCorrelation ?? 0).toBeGreaterThan(0.999);
    expect(findingsOf(result, "dual-mono")[0].message).toMatch(/same signal/);
  });

  it("independent noises: correlation ≈ 0 (within 5/√N, statistics), no stereo findings", () => {
    const a = noise(4, -20, 31);
    const b = noise(4, -20, 32);
    const result = analyse([a, b]);
    expect(Math.abs(result.metrics.stereoCorrelation ?? NaN)).toBeLessThan(5 / Math.sqrt(a.length));
    for (const code of ["polarity-inverted", "dual-mono", "channel-imbalance"] as const) expect(codes(result)).not.toContain(code);
  });

  it("channel imbalance above 3 dB names the quieter channel", () => {
    const result = analyse([noise(3, -20, 1), noise(3, -24.5, 2)]);
    const [imbalance] = findingsOf(result, "channel-imbalance");
    expect(imbalance.channel).toBe(1);
    // Noise RMS is within a few hundredths of its target level.
    expect(imbalance.message).toMatch(/4\.[45]\d dB quieter/);
    expect(codes(analyse([noise(3, -20, 1), noise(3, -22, 2)]))).not.toContain("channel-imbalance");
  });

  it("mono has no correlation", () => {
    expect(analyse([left]).metrics.stereoCorrelation).toBeNull();
  });
});

describe("effective bit depth", () => {
  const content = (seed: number) => speechLike({ sampleRateHz: RATE, seconds: 2, rmsDbfs: -20, seed });

  it("a 24-bit file with 16-bit content reads 16 and padded-bit-depth; true 24-bit reads 24", async () => {
    // Quantise to 16 bits first, then store in 24: the low 8 bits are zero.
    const sixteen = content(1).map((v) => Math.round(v * 32768) / 32768);
    const padded = await analyseFile([sixteen, sixteen], 24);
    expect(padded.metrics.effectiveBitDepth).toBe(16);
    expect(findingsOf(padded, "padded-bit-depth")[0].message).toMatch(/24-bit container carries 16-bit content/);
    const full = await analyseFile([content(2), content(3)], 24);
    expect(full.metrics.effectiveBitDepth).toBe(24);
    expect(codes(full)).not.toContain("padded-bit-depth");
  });

  it("reads 8 for 8-bit, 32 for 32-bit PCM with full resolution, and null for float", async () => {
    expect((await analyseFile([content(4)], 8)).metrics.effectiveBitDepth).toBe(8);
    const tiny = noise(0.2, -120, 5);
    expect((await analyseFile([tiny], 32)).metrics.effectiveBitDepth).toBe(32);
    expect((await analyseFile([content(5)], 32, "float")).metrics.effectiveBitDepth).toBeNull();
  });
});

describe("noise floor", () => {
  it("is the 10th percentile of 50 ms window RMS (definition): −50 dBFS under mostly −20 dBFS programme", () => {
    // 30 % of the time at −50 dBFS RMS, 70 % at −20: the quietest 10 % of windows sit at −50.
    const parts: Float32Array[] = [];
    for (let k = 0; k < 10; k++) parts.push(noise(0.7, -20, 100 + k), noise(0.3, -50, 200 + k));
    const floor = analyse([concat(...parts)]).metrics.noiseFloorDbfs ?? NaN;
    expect(Math.abs(floor - -50)).toBeLessThan(0.5);
  });

  it("ignores digital black", () => {
    const x = concat(silence({ sampleRateHz: RATE, seconds: 3 }), noise(3, -40, 1));
    expect(Math.abs((analyse([x]).metrics.noiseFloorDbfs ?? NaN) - -40)).toBeLessThan(0.5);
  });
});

describe("streaming", () => {
  it("blocks of 1, 997 and 65536 frames give the same metrics and findings", async () => {
    const base = speechLike({ sampleRateHz: RATE, seconds: 6, rmsDbfs: -18, seed: 40 });
    const x = hardClip(gainDb(base, 14));
    x.fill(0, 100000, 100480);
    x.fill(0.25, 200000, 200050);
    const y = gainDb(base, -7);
    const reference = await analyseFile([x, y], 24, "pcm", 65536);
    expect(reference.findings.length).toBeGreaterThan(3);
    for (const blockFrames of [1, 997]) {
      const r = await analyseFile([x, y], 24, "pcm", blockFrames);
      expect(r.findings).toEqual(reference.findings);
      for (const [key, value] of Object.entries(reference.metrics)) {
        const other = (r.metrics as Record<string, unknown>)[key];
        if (typeof value === "number") expect(other as number).toBeCloseTo(value, 9);
        else expect(JSON.stringify(other, (_k, v: unknown) => (typeof v === "number" ? Number(v.toPrecision(12)) : v))).toBe(
          JSON.stringify(value, (_k, v: unknown) => (typeof v === "number" ? Number(v.toPrecision(12)) : v)),
        );
      }
    }
  });

  it("bounds findings per code: the first 50 and one summary of the rest", () => {
    // 80 isolated clip bursts, one a second: 80 regions.
    const parts: Float32Array[] = [];
    for (let k = 0; k < 80; k++) parts.push(concat(hardClip(sine({ frequencyHz: 100, sampleRateHz: RATE, seconds: 0.02, peakDbfs: 6 })), noise(0.98, -30, k)));
    const result = analyse([concat(...parts)]);
    const clips = findingsOf(result, "clipping");
    expect(clips.length).toBe(MAX_FINDINGS_PER_CODE + 1);
    expect(clips[clips.length - 1].message).toMatch(/^30 more clipping finding\(s\)/);
  });

  it("rejects bad formats and out-of-order blocks with clear messages", () => {
    const format: StreamFormat = { sampleRateHz: RATE, channels: 0, bitDepth: 16, encoding: "pcm", totalFrames: 0 };
    expect(() => createLevelAnalyser(format, DEFAULT_ANALYSIS_SETTINGS)).toThrow(/channels must be a positive integer, got 0/);
    const analyser = createLevelAnalyser({ ...format, channels: 1 }, DEFAULT_ANALYSIS_SETTINGS);
    expect(() => analyser.push({ channels: [new Float32Array(10)], frames: 10, startFrame: 5 })).toThrow(/expected frame 0, got 5/);
  });
});
