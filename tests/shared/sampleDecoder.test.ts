import { describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import {
  byteSourceFromBytes,
  createDataChunkDecoder,
  createSampleDecoder,
  readWavLayout,
  type WavLayout,
} from "../../shared/src/wav/index.ts";
import { sine, whiteNoise } from "../fixtures/synth.ts";
import { encodeSamples, encodeWav } from "../fixtures/wavWriter.ts";

// Decoded samples are compared with wavefile's (an independent decoder from npm), scaled by the full-scale
// convention of the AudioBlock contract: integers / 2^(bits−1), 8-bit unsigned re-centred on 128.

function signals(channels: number, frames: number, rate = 48000): Float32Array[] {
  return Array.from({ length: channels }, (_, c) =>
    c % 2 === 0
      ? sine({ frequencyHz: 440 * (c + 1), sampleRateHz: rate, seconds: frames / rate, peakDbfs: -1 - c })
      : whiteNoise({ sampleRateHz: rate, seconds: frames / rate, rmsDbfs: -12, seed: c + 1 }),
  );
}

/** Decodes every frame of a WAV through the data-chunk decoder, pushing the file in pieces of `pieceBytes`. */
async function decodeAll(bytes: Uint8Array, pieceBytes: number, blockFrames: number) {
  const layout = await readWavLayout(byteSourceFromBytes(bytes));
  const out = Array.from({ length: layout.channels }, () => new Float32Array(layout.totalFrames));
  const starts: number[] = [];
  const decoder = createDataChunkDecoder(layout, blockFrames, (block) => {
    starts.push(block.startFrame);
    for (let c = 0; c < layout.channels; c++) out[c].set(block.channels[c].subarray(0, block.frames), block.startFrame);
  });
  for (let at = 0; at < bytes.length; at += pieceBytes) decoder.push(bytes.subarray(at, at + pieceBytes), at);
  decoder.finish();
  return { layout, out, starts, decoder };
}

describe("createSampleDecoder against wavefile", () => {
  it.each([
    { bitDepth: 8, encoding: "pcm", channels: 1 },
    { bitDepth: 16, encoding: "pcm", channels: 2 },
    { bitDepth: 16, encoding: "pcm", channels: 3 },
    { bitDepth: 24, encoding: "pcm", channels: 2 },
    { bitDepth: 24, encoding: "pcm", channels: 8 },
    { bitDepth: 32, encoding: "pcm", channels: 2 },
    { bitDepth: 32, encoding: "float", channels: 2 },
    { bitDepth: 64, encoding: "float", channels: 6 },
  ] as const)("$channels ch $bitDepth-bit $encoding", async ({ bitDepth, encoding, channels }) => {
    const bytes = encodeWav(signals(channels, 1500), { sampleRateHz: 48000, bitDepth, encoding });
    const { out } = await decodeAll(bytes, 1 << 20, 4096);
    const samples = new WaveFile(bytes).getSamples(false, Float64Array) as unknown as Float64Array | Float64Array[];
    // wavefile returns one flat array for mono, an array per channel otherwise.
    const theirs = channels === 1 ? [samples as Float64Array] : (samples as Float64Array[]);
    const toFullScale = (v: number) =>
      encoding === "float" ? v : bitDepth === 8 ? (v - 128) / 128 : v / 2 ** (bitDepth - 1);
    for (let c = 0; c < channels; c++) {
      const mine = out[c];
      let worst = 0;
      for (let i = 0; i < mine.length; i++) worst = Math.max(worst, Math.abs(mine[i] - toFullScale(theirs[c][i])));
      // Float32 holds 24-bit integers exactly; 32-bit integers and float64 round to float32 (2^-24 relative).
      expect(worst).toBeLessThanOrEqual(2 ** -24);
    }
  });

  it("full scale: the most negative integer is exactly −1.0, 8-bit 128 is 0 (AudioBlock contract)", () => {
    const decoder = createSampleDecoder({ encoding: "pcm", bitDepth: 16, channels: 1 });
    const out = [new Float32Array(2)];
    decoder.decode(Uint8Array.from([0x00, 0x80, 0xff, 0x7f]), 0, 2, out, 0, 0);
    expect(out[0][0]).toBeCloseTo(-1, 12);
    expect(out[0][1]).toBeCloseTo(32767 / 32768, 9);
    const eight = createSampleDecoder({ encoding: "pcm", bitDepth: 8, channels: 1 });
    eight.decode(Uint8Array.from([128, 0]), 0, 2, out, 0, 0);
    expect(out[0][0]).toBeCloseTo(0, 12);
    expect(out[0][1]).toBeCloseTo(-1, 12);
  });

  it.each([16, 32, 64] as const)("%i-bit data at an odd address decodes the same as aligned", (bitDepth) => {
    const encoding = bitDepth === 64 ? "float" : "pcm";
    const data = encodeSamples(signals(2, 300), bitDepth, encoding);
    const shifted = new Uint8Array(data.length + 1);
    shifted.set(data, 1);
    const decoder = createSampleDecoder({ encoding, bitDepth, channels: 2 });
    const aligned = [new Float32Array(300), new Float32Array(300)];
    const odd = [new Float32Array(300), new Float32Array(300)];
    decoder.decode(data, 0, 300, aligned, 0, 0);
    decoder.decode(shifted, 1, 300, odd, 0, 0);
    for (let c = 0; c < 2; c++) for (let i = 0; i < 300; i += 7) expect(odd[c][i]).toBeCloseTo(aligned[c][i], 12);
  });

  it("NaN and ±Infinity in float data become 0 and are counted with their frames", () => {
    const left = new Float32Array([0.1, NaN, 0.2, 0.3, 0.4]);
    const right = new Float32Array([0.5, 0.5, Infinity, 0.5, -Infinity]);
    const decoder = createSampleDecoder({ encoding: "float", bitDepth: 32, channels: 2 });
    const out = [new Float32Array(5), new Float32Array(5)];
    decoder.decode(encodeSamples([left, right], 32, "float"), 0, 5, out, 0, 1000);
    expect(decoder.nonFiniteSamples).toBe(3);
    expect(decoder.firstNonFiniteFrame).toBe(1001);
    expect(decoder.lastNonFiniteFrame).toBe(1004);
    expect(Array.from(out[0], (x) => Math.round(x * 10))).toEqual([1, 0, 2, 3, 4]);
    expect(Array.from(out[1], (x) => Math.round(x * 10))).toEqual([5, 5, 0, 5, 0]);
  });

  it("float64 values beyond float32 range count as non-finite", () => {
    const decoder = createSampleDecoder({ encoding: "float", bitDepth: 64, channels: 1 });
    const out = [new Float32Array(2)];
    decoder.decode(encodeSamples([Float32Array.from([0.25, 0])], 64, "float"), 0, 2, out, 0, 0);
    const bytes = new Uint8Array(new Float64Array([1e300, -0.5]).buffer);
    decoder.decode(bytes, 0, 2, out, 0, 0);
    expect(decoder.nonFiniteSamples).toBe(1);
    expect(out[0][0]).toBeCloseTo(0, 12);
    expect(out[0][1]).toBeCloseTo(-0.5, 12);
  });

  it("refuses formats it cannot decode, saying which", () => {
    expect(() => createSampleDecoder({ encoding: "pcm", bitDepth: 12, channels: 1 })).toThrow(/12-bit pcm/);
  });
});

describe("createDataChunkDecoder", () => {
  const bytes = encodeWav(signals(2, 5000, 44100), { sampleRateHz: 44100, bitDepth: 24 });

  it.each([
    { pieceBytes: 1, blockFrames: 997 },
    { pieceBytes: 7, blockFrames: 1 },
    { pieceBytes: 4093, blockFrames: 65536 },
    { pieceBytes: 1 << 20, blockFrames: 997 },
  ])("pieces of $pieceBytes bytes, blocks of $blockFrames frames: same samples, contiguous blocks", async ({ pieceBytes, blockFrames }) => {
    const reference = await decodeAll(bytes, 1 << 20, 65536);
    const { out, starts, decoder } = await decodeAll(bytes, pieceBytes, blockFrames);
    expect(decoder.framesDecoded).toBe(5000);
    expect(starts.length).toBe(Math.ceil(5000 / blockFrames));
    for (let k = 0; k < starts.length; k++) expect(starts[k]).toBe(k * blockFrames);
    let worst = 0;
    for (let c = 0; c < 2; c++) for (let i = 0; i < 5000; i++) worst = Math.max(worst, Math.abs(out[c][i] - reference.out[c][i]));
    expect(worst).toBeLessThan(1e-12);
  });

  it("stops at the last whole frame of a truncated chunk", async () => {
    const cut = bytes.subarray(0, bytes.length - 1000 - 2);
    const { layout, decoder } = await decodeAll(cut, 333, 512);
    expect(layout.isTruncated).toBe(true);
    expect(decoder.framesDecoded).toBe(layout.totalFrames);
    expect(layout.totalFrames).toBe(Math.floor((5000 * 6 - 1002) / 6));
  });

  it("rejects bytes that skip ahead", () => {
    const layout: WavLayout = { dataOffset: 44, totalFrames: 10, blockAlign: 2, channels: 1, encoding: "pcm", bitDepth: 16 } as WavLayout;
    const decoder = createDataChunkDecoder(layout, 4, () => undefined);
    expect(() => decoder.push(new Uint8Array(10), 50)).toThrow(/expected offset 44, got 50/);
  });

  it("rejects a block size below one frame", () => {
    const layout = { dataOffset: 44, totalFrames: 10, blockAlign: 2, channels: 1, encoding: "pcm", bitDepth: 16 } as WavLayout;
    expect(() => createDataChunkDecoder(layout, 0, () => undefined)).toThrow(/positive integer, got 0/);
  });
});
