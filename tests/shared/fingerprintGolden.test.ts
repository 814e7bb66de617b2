/**
 * Fingerprints already stored on servers are compared with new scans (issue #11's duplicates), so a
 * speed-up of the fingerprinter (issue #22) must not change a single hash or time of the current
 * FINGERPRINT_VERSION. These pins are SHA-256 digests of the encoded fingerprints of fixed synthetic
 * inputs, recorded with the fingerprinter as of version 3 before the issue #22 work; every path is
 * covered: halving stages (0 to 3 of them), channel pairs and an odd channel, float input with
 * non-finite samples, block sizes that split frames and halving pairs anywhere.
 *
 * A deliberate change of the hashes bumps FINGERPRINT_VERSION (fingerprinter.ts) and re-records the
 * pins; the version pin below fails first to say so. The inputs come from tests/fixtures: changing a
 * generator there also means re-recording, with the fingerprinter unchanged.
 */
import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import { encodeFingerprint } from "../../shared/src/fingerprint/codec.ts";
import { createFingerprinter, FINGERPRINT_VERSION } from "../../shared/src/fingerprint/fingerprinter.ts";
import type { StreamFormat } from "../../shared/src/types/analysis.ts";
import { programme } from "../fixtures/fingerprintSignals.ts";
import { pinkNoise } from "../fixtures/synth.ts";

interface GoldenCase {
  name: string;
  sampleRateHz: number;
  encoding: StreamFormat["encoding"];
  blockFrames: number;
  channels: (rate: number) => Float32Array[];
  sha256: string;
  hashes: number;
}

/** Streams the channels through one reused buffer per channel, as the CLI's reader does. */
function encodedFingerprint(c: GoldenCase): string {
  const channels = c.channels(c.sampleRateHz);
  const totalFrames = channels[0].length;
  const fp = createFingerprinter({ sampleRateHz: c.sampleRateHz, channels: channels.length, bitDepth: c.encoding === "float" ? 32 : 24, encoding: c.encoding, totalFrames });
  const buffers = channels.map(() => new Float32Array(c.blockFrames));
  for (let start = 0; start < totalFrames; start += c.blockFrames) {
    const frames = Math.min(c.blockFrames, totalFrames - start);
    channels.forEach((ch, i) => buffers[i].set(ch.subarray(start, start + frames)));
    fp.push({ channels: buffers, frames, startFrame: start });
  }
  return encodeFingerprint(fp.finish());
}

const prog = (seed: number, seconds: number) => (rate: number) => programme({ seed, seconds, sampleRateHz: rate });
/** A programme with a NaN, infinities and a run of huge values planted (float files can hold them). */
const withNonFinite = (seed: number, seconds: number) => (rate: number) => {
  const x = programme({ seed, seconds, sampleRateHz: rate });
  x[1000] = Number.NaN;
  x[Math.floor(x.length / 2)] = Number.POSITIVE_INFINITY;
  x[x.length - 7] = Number.NEGATIVE_INFINITY;
  x.fill(3e38, 5 * rate, 5 * rate + 50);
  return [x];
};

const CASES: GoldenCase[] = [
  { name: "48 kHz stereo PCM, 64 Ki-frame blocks", sampleRateHz: 48000, encoding: "pcm", blockFrames: 65536, channels: (r) => [prog(1, 20)(r), prog(2, 20)(r)],
    sha256: "ba4fa2f9988a7e867c6f45d2ba2736a0cd9f0e9eafdd00dc8d85637264e3d033", hashes: 179 },
  { name: "48 kHz stereo PCM, 777-frame blocks", sampleRateHz: 48000, encoding: "pcm", blockFrames: 777, channels: (r) => [prog(1, 20)(r), prog(2, 20)(r)],
    sha256: "ba4fa2f9988a7e867c6f45d2ba2736a0cd9f0e9eafdd00dc8d85637264e3d033", hashes: 179 },
  { name: "48 kHz stereo pink noise", sampleRateHz: 48000, encoding: "pcm", blockFrames: 65536, channels: (r) => [pinkNoise({ sampleRateHz: r, seconds: 30, rmsDbfs: -20, seed: 3 }), pinkNoise({ sampleRateHz: r, seconds: 30, rmsDbfs: -20, seed: 4 })],
    sha256: "f1225a118f83d9f44ac03ee591a1696f7594557fafba1c661d051e1c498a1214", hashes: 259 },
  { name: "44.1 kHz mono float with non-finite samples", sampleRateHz: 44100, encoding: "float", blockFrames: 4096, channels: withNonFinite(5, 15),
    sha256: "a4f135a1bf3cabceae46416d4aa8a191a026733ece897a2e8477148057ece3db", hashes: 112 },
  { name: "96 kHz three channels, odd blocks", sampleRateHz: 96000, encoding: "pcm", blockFrames: 10001, channels: (r) => [prog(6, 10)(r), prog(7, 10)(r), prog(8, 10)(r)],
    sha256: "3516dc2d5b225b56cdf46249b9f8c0eae53dde5ad3dda655e90ffb9fd09753a0", hashes: 92 },
  { name: "192 kHz mono", sampleRateHz: 192000, encoding: "pcm", blockFrames: 65536, channels: (r) => [prog(9, 6)(r)],
    sha256: "50ea95c748b909b3f03509b22cc8026bdca3ed5a462ecb731ffde961034ea36d", hashes: 45 },
  { name: "22.05 kHz stereo (no halving)", sampleRateHz: 22050, encoding: "pcm", blockFrames: 4096, channels: (r) => [prog(10, 12)(r), prog(11, 12)(r)],
    sha256: "47c7574cd251489bf26daac45e3d07016a7d8b3e30caf4ddbe37f374c4b46562", hashes: 110 },
  { name: "8 kHz mono (upsampled)", sampleRateHz: 8000, encoding: "pcm", blockFrames: 1000, channels: (r) => [prog(12, 12)(r)],
    sha256: "3f98f4a52f126ba59e1e4cd4bd1af25987d026acb117adce83579e807c45fc29", hashes: 78 },
];

describe("fingerprint: stored codes stay valid (issue #22)", () => {
  it("is still version 3, the version these pins were recorded with", () => {
    expect(FINGERPRINT_VERSION).toBe(3);
  });

  it.each(CASES)("$name: the same encoded fingerprint as recorded", (c) => {
    const text = encodedFingerprint(c);
    const digest = createHash("sha256").update(text).digest("hex");
    // The count first: a mismatch then says how far off, the digest whether anything at all moved.
    expect(Buffer.from(text, "base64").readUInt32LE(16)).toBe(c.hashes);
    expect(digest).toBe(c.sha256);
  });
});
