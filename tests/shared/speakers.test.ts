/**
 * The one channel-layout rule (shared/src/analysis/speakers.ts) that loudness weights and silence's LFE both
 * follow. Weights: ITU-R BS.1770-4, Annex 1, Table 3 (surrounds 1.41, LFE excluded, others 1.0). Speaker bits
 * and their order: WAVE_FORMAT_EXTENSIBLE (Microsoft's KSAUDIO_SPEAKER definitions, from memory: FL 0x1, FR 0x2,
 * FC 0x4, LFE 0x8, BL 0x10, BR 0x20, BC 0x100, SL 0x200, SR 0x400); without a mask, 5.0, 5.1 and 7.1 in that
 * order, the layouts RFC 9639 (9.1.3) fixes for five, six and eight FLAC channels. The level analyser and an
 * independent meter (Debian's ffmpeg, ebur128) are checked on an eight-channel WAV without a mask.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { createLevelAnalyser } from "../../shared/src/analysis/levelAnalyser.ts";
import { channelSpeakers, lfeChannelIndex, loudnessChannelWeights, SPEAKER_LFE } from "../../shared/src/analysis/speakers.ts";
import type { LevelAnalysisResult } from "../../shared/src/types/analysis.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../../shared/src/types/settings.ts";
import { byteSourceFromBytes, createDataChunkDecoder, readWavLayout } from "../../shared/src/wav/index.ts";
import { sine, speechLike } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { ffmpegAvailable, ffmpegEbur128 } from "../helpers/ffmpeg.ts";

const RATE = 48000;

/** Encodes a WAV, parses and decodes it as the CLI does (its mask, or none, from the file), then analyses it. */
async function analyseWav(bytes: Uint8Array): Promise<LevelAnalysisResult> {
  const layout = await readWavLayout(byteSourceFromBytes(bytes));
  const analyser = createLevelAnalyser(
    { sampleRateHz: layout.sampleRateHz, channels: layout.channels, bitDepth: layout.bitDepth, encoding: layout.encoding, totalFrames: layout.totalFrames, channelMask: layout.channelMask },
    DEFAULT_ANALYSIS_SETTINGS,
  );
  const decoder = createDataChunkDecoder(layout, 65536, (block) => analyser.push(block));
  decoder.push(bytes, 0);
  decoder.finish();
  return analyser.finish();
}

describe("one channel layout for loudness weights and the LFE", () => {
  it("loudness leaves out exactly the channel silence takes for the LFE, for every channel count and mask", () => {
    const wrong: string[] = [];
    for (let channels = 1; channels <= 8; channels++) {
      for (const mask of [null, 0, ...Array.from({ length: 0x800 }, (_, m) => m)]) {
        const weights = Array.from(loudnessChannelWeights(channels, mask));
        const lfe = lfeChannelIndex(channels, mask);
        const zero = weights.indexOf(0);
        if ((zero < 0 ? null : zero) !== lfe || weights.filter((w) => w === 0).length > 1) wrong.push(`${channels} ch, mask ${mask}: weights ${weights}, LFE ${lfe}`);
      }
    }
    expect(wrong).toEqual([]);
  });

  it("without a mask: 5.0, 5.1 and 7.1 in the WAVE order, other counts feed no speaker", () => {
    expect(Array.from(loudnessChannelWeights(8, null))).toEqual([1, 1, 1, 0, 1.41, 1.41, 1.41, 1.41]);
    expect(lfeChannelIndex(8, null)).toBe(3);
    expect(Array.from(loudnessChannelWeights(6, 0))).toEqual([1, 1, 1, 0, 1.41, 1.41]);
    expect(Array.from(loudnessChannelWeights(5, null))).toEqual([1, 1, 1, 1.41, 1.41]);
    expect(lfeChannelIndex(5, null)).toBeNull();
    for (const channels of [1, 2, 3, 4, 7]) {
      expect(channelSpeakers(channels, null), `${channels} ch`).toEqual(new Array(channels).fill(0));
      expect(Array.from(loudnessChannelWeights(channels, null))).toEqual(new Array(channels).fill(1));
      expect(lfeChannelIndex(channels, null)).toBeNull();
    }
  });

  it("with a mask: channels feed its set bits in ascending order; channels past them feed none", () => {
    expect(channelSpeakers(8, 0x63f)).toEqual([0x1, 0x2, 0x4, SPEAKER_LFE, 0x10, 0x20, 0x200, 0x400]);
    expect(channelSpeakers(7, 0x70f)).toEqual([0x1, 0x2, 0x4, SPEAKER_LFE, 0x100, 0x200, 0x400]);
    // 6.1's back centre is no surround of BS.1770-4's Table 3: it weighs 1.0.
    expect(Array.from(loudnessChannelWeights(7, 0x70f))).toEqual([1, 1, 1, 0, 1, 1.41, 1.41]);
    expect(channelSpeakers(4, 0x3)).toEqual([0x1, 0x2, 0, 0]);
    expect(lfeChannelIndex(5, 0x3b)).toBe(2); // FL FR LFE BL BR: no centre before it
  });

  it("an eight-channel WAV without a mask measures as the 7.1 WAV (0x63f), and its silent LFE is no dead channel", async () => {
    const seconds = 4;
    const frames = RATE * seconds;
    // Speech-like signal on every channel but the fourth (the LFE of 7.1), each channel its own.
    const planar = Array.from({ length: 8 }, (_, c) => (c === 3 ? new Float32Array(frames) : speechLike({ sampleRateHz: RATE, seconds, rmsDbfs: -24, seed: 60 + c })));
    const plain = await analyseWav(encodeWav(planar, { sampleRateHz: RATE, bitDepth: 24 }));
    const masked = await analyseWav(encodeWav(planar, { sampleRateHz: RATE, bitDepth: 24, extensible: true, channelMask: 0x63f }));
    expect(plain.metrics.integratedLufs).toBeCloseTo(masked.metrics.integratedLufs!, 9);
    expect(plain.findings.filter((f) => f.code === "dead-channel")).toEqual([]);
    // A tone on one channel at a time: surrounds read 10·log10(1.41) = +1.49 dB over a front channel, the LFE nothing.
    const tone = sine({ frequencyHz: 1000, sampleRateHz: RATE, seconds: 3, peakDbfs: -20 });
    const only = async (k: number) =>
      (await analyseWav(encodeWav(Array.from({ length: 8 }, (_, c) => (c === k ? tone : new Float32Array(tone.length))), { sampleRateHz: RATE, bitDepth: 24 }))).metrics.integratedLufs;
    const front = await only(0);
    for (const k of [4, 5, 6, 7]) expect(Math.abs((await only(k))! - front! - 10 * Math.log10(1.41)), `channel ${k + 1}`).toBeLessThan(0.01);
    expect(await only(3)).toBeNull(); // −∞ LUFS: nothing measured (the metrics say null)
  });

  describe.runIf(ffmpegAvailable)("against Debian's ffmpeg (ebur128), which weighs by the 7.1 layout the mask names", () => {
    const dir = mkdtempSync(path.join(tmpdir(), "tidemark-speakers-"));
    afterAll(() => rmSync(dir, { recursive: true, force: true }));

    it("the eight-channel WAV without a mask reads as ffmpeg reads the same audio marked 7.1", async () => {
      const seconds = 6;
      // Unequal levels per channel, so the weights show: louder surrounds, a loud LFE that must not count.
      const planar = Array.from({ length: 8 }, (_, c) => speechLike({ sampleRateHz: RATE, seconds, rmsDbfs: c === 3 ? -12 : -30 + 2 * c, seed: 80 + c }));
      const plain = await analyseWav(encodeWav(planar, { sampleRateHz: RATE, bitDepth: 24 }));
      const file = path.join(dir, "seven-one.wav");
      writeFileSync(file, encodeWav(planar, { sampleRateHz: RATE, bitDepth: 24, extensible: true, channelMask: 0x63f }));
      const theirs = await ffmpegEbur128(file);
      // ffmpeg's meter reports to 0.1 LU; the same tolerance as the stereo cross-check in loudness.test.ts.
      expect(Math.abs(plain.metrics.integratedLufs! - theirs.integratedLufs)).toBeLessThanOrEqual(0.2);
      // Every channel at 1.0 (the rule before; here by a mask of top speakers only, none a surround or the LFE, so each weighs 1.0)
      // reads the loud LFE and the surrounds unweighted: measured 1.6 LU off ffmpeg (ours 0.04 LU off), 2026-12-05.
      const flat = await analyseWav(encodeWav(planar, { sampleRateHz: RATE, bitDepth: 24, extensible: true, channelMask: 0xff0000 }));
      expect(Math.abs(flat.metrics.integratedLufs! - theirs.integratedLufs)).toBeGreaterThan(0.5);
    });
  });
});
