import { describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import { rmsDbfs, sine, whiteNoise } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";

// The fixtures are themselves checked against an outside reader (wavefile, from npm),
// so a bug in the test writer cannot mirror a bug in Tidemark's reader.
describe("test fixtures", () => {
  it("a full-scale sine has RMS −3.01 dBFS (common practice)", () => {
    expect(rmsDbfs(sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: 1 }))).toBeCloseTo(-3.01, 2);
  });

  it("white noise hits its RMS target", () => {
    expect(rmsDbfs(whiteNoise({ sampleRateHz: 48000, seconds: 2, rmsDbfs: -20 }))).toBeCloseTo(-20, 1);
  });

  it.each([16, 24, 32] as const)("encodeWav %i-bit PCM decodes identically in wavefile", (bitDepth) => {
    const left = sine({ frequencyHz: 997, sampleRateHz: 44100, seconds: 0.05, peakDbfs: -6 });
    const right = sine({ frequencyHz: 440, sampleRateHz: 44100, seconds: 0.05, peakDbfs: -1 });
    const bytes = encodeWav([left, right], { sampleRateHz: 44100, bitDepth, bext: { description: "fixture" } });
    const wav = new WaveFile(bytes);
    const fmt = wav.fmt as { numChannels: number; sampleRate: number; bitsPerSample: number };
    expect(fmt).toMatchObject({ numChannels: 2, sampleRate: 44100, bitsPerSample: bitDepth });
    const samples = wav.getSamples(false, Float64Array) as unknown as Float64Array[];
    const scale = 2 ** (bitDepth - 1);
    for (let i = 0; i < left.length; i += 37) {
      expect(samples[0][i] / scale).toBeCloseTo(left[i], 4);
      expect(samples[1][i] / scale).toBeCloseTo(right[i], 4);
    }
    // wavefile keeps the fixed-width field's NUL padding.
    expect((wav.bext as { description: string }).description.replace(/\0+$/, "")).toBe("fixture");
  });
});
