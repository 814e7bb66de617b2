import { describe, expect, it } from "vitest";
import {
  canFingerprint,
  createFingerprinter,
  decodeFingerprint,
  DEFAULT_MIN_SCORE,
  encodeFingerprint,
  FINGERPRINT_GRID,
  FINGERPRINT_VERSION,
  MAX_FINGERPRINT_HASHES,
  MAX_HASHES_PER_SECOND,
  OFFSET_BIN_SECONDS,
  scoreMatch,
  scoreOffsetHits,
  type Fingerprint,
} from "../../shared/src/fingerprint/index.ts";
import { hashLandmarks, unpackLandmarkHash } from "../../shared/src/fingerprint/landmarks.ts";
import { createMultiChannelResampler, createStreamingResampler } from "../../shared/src/fingerprint/resampler.ts";
import { MAX_FINGERPRINT_CHARS } from "../../shared/src/types/report.ts";
import { fingerprintOf, programme } from "../fixtures/fingerprintSignals.ts";
import { gainDb, pinkNoise, rmsDbfs, seededRandom, sine, whiteNoise } from "../fixtures/synth.ts";

const RATE = 48000;
const format = (sampleRateHz: number, channels = 1) => ({ sampleRateHz, channels, bitDepth: 24, encoding: "pcm" as const, totalFrames: 0 });

/** (hash, time) pairs as strings, to count what two fingerprints share exactly. */
function entries(fp: Fingerprint): Set<string> {
  const out = new Set<string>();
  for (let i = 0; i < fp.hashes.length; i++) out.add(`${fp.hashes[i]}@${fp.times[i]}`);
  return out;
}
function sharedFraction(a: Fingerprint, b: Fingerprint): number {
  const ea = entries(a);
  let shared = 0;
  for (const e of entries(b)) if (ea.has(e)) shared++;
  return shared / Math.max(1, ea.size);
}

function resampleAll(x: Float32Array, inputRateHz: number): Float32Array {
  const r = createStreamingResampler({ inputRateHz, outputRateHz: FINGERPRINT_GRID.analysisRateHz, passbandHz: 4000, stopbandHz: 7025 });
  const out = new Float32Array(Math.ceil((x.length * FINGERPRINT_GRID.analysisRateHz) / inputRateHz) + 8);
  let n = 0;
  for (let s = 0; s < x.length; s += 1000) {
    r.write(x.subarray(s), Math.min(1000, x.length - s));
    n += r.read(out.subarray(n));
  }
  r.end();
  n += r.read(out.subarray(n));
  return out.subarray(0, n);
}

describe("fingerprint: internal resampler", () => {
  // The whole point of resampling: the band must pass untouched and nothing may fold into it.
  // Kaiser's 40 dB design leaves a passband ripple of δ = 0.01, ±0.09 dB (from memory), a little more
  // next to the transition band; 0.2 dB bounds it with room for the 0.5 s clip's RMS estimate.
  it.each([8000, 44100, 48000, 96000, 192000])("passes 1 kHz and 3.9 kHz at %i Hz within 0.2 dB", (rate) => {
    for (const frequencyHz of rate === 8000 ? [1000] : [1000, 3900]) {
      const x = sine({ frequencyHz, sampleRateHz: rate, seconds: 0.5, peakDbfs: -6 });
      const y = resampleAll(x, rate);
      expect(y.length).toBe(Math.ceil((x.length * FINGERPRINT_GRID.analysisRateHz) / rate));
      // Compare steady-state RMS, away from the edges where the kernel sees silence.
      expect(Math.abs(rmsDbfs(y.subarray(500, y.length - 500)) - rmsDbfs(x))).toBeLessThan(0.2);
    }
  });

  it.each([44100, 48000, 96000])("attenuates an 8 kHz tone (it would fold to 3.0 kHz) by ≥ 38 dB at %i Hz", (rate) => {
    // Design target 40 dB (Kaiser's formulas, from memory); 2 dB of slack for the short kernel's edges.
    const x = sine({ frequencyHz: 8000, sampleRateHz: rate, seconds: 0.5, peakDbfs: 0 });
    const y = resampleAll(x, rate);
    expect(rmsDbfs(y.subarray(500, y.length - 500)) - rmsDbfs(x)).toBeLessThan(-38);
  });
});

describe("fingerprint: multi-channel resampler", () => {
  it("gives every channel exactly what the mono resampler gives it, in pairs and alone", () => {
    const rate = 44100;
    const inputs = [1, 2, 3].map((seed) => whiteNoise({ sampleRateHz: rate, seconds: 0.5, rmsDbfs: -20, seed }));
    const multi = createMultiChannelResampler({ inputRateHz: rate, outputRateHz: FINGERPRINT_GRID.analysisRateHz, passbandHz: 4000, stopbandHz: 7025 }, 3);
    const outs = inputs.map(() => new Float32Array(8000));
    let n = 0;
    for (let s = 0; s < inputs[0].length; s += 777) {
      const count = Math.min(777, inputs[0].length - s);
      multi.write(inputs.map((x) => x.subarray(s, s + count)), count);
      n += multi.read(outs.map((o) => o.subarray(n)));
    }
    multi.end();
    n += multi.read(outs.map((o) => o.subarray(n)));
    for (const [c, x] of inputs.entries()) expect(Array.from(outs[c].subarray(0, n)), `channel ${c}`).toEqual(Array.from(resampleAll(x, rate)));
    expect(() => multi.read([new Float32Array(4)])).toThrow(/got 1 outputs, expected 3/);
    expect(() => createMultiChannelResampler({ inputRateHz: rate, outputRateHz: 11025, passbandHz: 4000, stopbandHz: 7025 }, 0)).toThrow(/channels must be an integer ≥ 1, got 0/);
  });
});

describe("fingerprint: landmark pairs", () => {
  it("pairs each anchor with the nearest peaks of its target zone and packs (f1, Δf, Δt)", () => {
    const frames = Int32Array.from([0, 0, 10, 20, 70, 200]);
    const bins = Int32Array.from([5, 300, 40, 41, 7, 9]);
    const { hashes, anchorFrames } = hashLandmarks({ frames, bins, count: 6 }, { fanOut: 3, minDeltaFrames: 1, maxDeltaFrames: 63, maxDeltaBins: 343 });
    // Same-frame pairs (Δt = 0) and targets beyond 63 frames are outside the zone.
    const expected = [
      [0, 5, 35, 10], [0, 5, 36, 20],
      [0, 300, -260, 10], [0, 300, -259, 20],
      [10, 40, 1, 10], [10, 40, -33, 60],
      [20, 41, -34, 50],
    ];
    expect(Array.from(hashes, (h, i) => {
      const u = unpackLandmarkHash(h);
      return [anchorFrames[i], u.anchorBin, u.deltaBins, u.deltaFrames];
    })).toEqual(expected);
  });

  it("stops at fanOut targets and rejects unordered peaks", () => {
    const frames = Int32Array.from([0, 1, 2, 3, 4, 5]);
    const bins = Int32Array.from([1, 2, 3, 4, 5, 6]);
    const zone = { fanOut: 2, minDeltaFrames: 1, maxDeltaFrames: 63, maxDeltaBins: 343 };
    expect(hashLandmarks({ frames, bins, count: 6 }, zone).hashes.length).toBe(2 * 4 + 1);
    expect(() => hashLandmarks({ frames: Int32Array.from([3, 1]), bins, count: 2 }, zone)).toThrow(/time order/);
    expect(() => hashLandmarks({ frames, bins, count: 6 }, { ...zone, maxDeltaFrames: 64 })).toThrow(/target zone/);
  });
});

describe("fingerprint: createFingerprinter", () => {
  const clip = programme({ seed: 1, seconds: 20, sampleRateHz: RATE });
  const reference = fingerprintOf([clip], RATE);

  it("returns version, time-ordered anchors inside the clip and its duration", () => {
    expect(reference.version).toBe(FINGERPRINT_VERSION);
    expect(reference.durationSeconds).toBeCloseTo(20, 6);
    expect(reference.hashes.length).toBe(reference.times.length);
    expect(reference.hashes.length).toBeGreaterThan(100);
    for (let i = 1; i < reference.times.length; i++) expect(reference.times[i]).toBeGreaterThanOrEqual(reference.times[i - 1]);
    expect(reference.times[reference.times.length - 1]).toBeLessThan(20);
  });

  it("keeps ≤ 20 hashes per second whatever the content (issue #11)", () => {
    const seconds = 20;
    // Adversarial for the density bound: every second a 50 ms chord of 12 tones, all of them strong peaks.
    const chords = new Float32Array(seconds * RATE);
    for (let t = 0; t < seconds; t++) {
      for (let j = 0; j < 12; j++) {
        const w = (2 * Math.PI * (350 + 300 * j + 37 * t)) / RATE;
        for (let i = 0; i < 0.05 * RATE; i++) chords[t * RATE + i] += 0.05 * Math.sin(w * i);
      }
    }
    const clicks = new Float32Array(seconds * RATE);
    for (let t = 0; t < clicks.length; t += RATE / 4) clicks[t] = 0.9;
    const contents: [string, Float32Array][] = [
      ["programme", clip],
      ["white noise", whiteNoise({ sampleRateHz: RATE, seconds, rmsDbfs: -20 })],
      ["pink noise", pinkNoise({ sampleRateHz: RATE, seconds, rmsDbfs: -20 })],
      ["steady 1 kHz sine", sine({ frequencyHz: 1000, sampleRateHz: RATE, seconds, peakDbfs: -6 })],
      ["chords every second", chords],
      ["clicks", clicks],
    ];
    const rates: Record<string, number> = {};
    for (const [name, x] of contents) {
      const fp = fingerprintOf([x], RATE);
      rates[name] = fp.hashes.length / fp.durationSeconds;
      expect(rates[name], name).toBeLessThanOrEqual(MAX_HASHES_PER_SECOND);
      // Locally too, not by dropping the tail: each 10 s holds some hashes and at most 200.
      for (let from = 0; from < seconds; from += 10) {
        const inWindow = fp.times.filter((t) => t >= from && t < from + 10).length;
        expect(inWindow, `${name}, ${from}–${from + 10} s`).toBeGreaterThan(0);
        expect(inWindow, `${name}, ${from}–${from + 10} s`).toBeLessThanOrEqual(10 * MAX_HASHES_PER_SECOND);
      }
    }
    console.log("hashes per second:", Object.entries(rates).map(([k, v]) => `${k} ${v.toFixed(1)}`).join(", "));
    // Sub-second files too, where the window bound alone would allow more.
    const short = fingerprintOf([chords.subarray(0, RATE / 2)], RATE);
    expect(short.hashes.length).toBeLessThanOrEqual(MAX_HASHES_PER_SECOND * 0.5);
  });

  it("gives nothing for digital silence", () => {
    expect(fingerprintOf([new Float32Array(5 * RATE)], RATE).hashes.length).toBe(0);
  });

  it.each([-30, -6, 6])("picks the same peaks at %i dB gain (level-independent)", (db) => {
    expect(sharedFraction(reference, fingerprintOf([gainDb(clip, db)], RATE))).toBeGreaterThanOrEqual(0.95);
  });

  it("does not depend on block size, and copies what it keeps from reused block arrays", () => {
    // fingerprintOf streams through one reused buffer per channel; compare tiny and large blocks.
    const small = fingerprintOf([clip], RATE, 333);
    const large = fingerprintOf([clip], RATE, 65536);
    expect(Array.from(small.hashes)).toEqual(Array.from(reference.hashes));
    expect(Array.from(large.times)).toEqual(Array.from(reference.times));
  });

  it("combines channels by power: left-only, dual-mono and one channel polarity-inverted all match the mono clip", () => {
    const half = gainDb(clip, -6.0206);
    const inverted = clip.map((x) => -x);
    // Identical channels give exactly the mono clip's power; left-only is the same 3 dB lower.
    expect(Array.from(fingerprintOf([clip, clip], RATE).hashes)).toEqual(Array.from(reference.hashes));
    expect(sharedFraction(reference, fingerprintOf([clip, new Float32Array(clip.length)], RATE))).toBeGreaterThanOrEqual(0.95);
    expect(sharedFraction(reference, fingerprintOf([half, half], RATE))).toBeGreaterThanOrEqual(0.95);
    // L + R of this pair is digital silence: a mono mix would have nothing left to fingerprint.
    const polarity = fingerprintOf([clip, inverted], RATE);
    expect(Array.from(polarity.hashes)).toEqual(Array.from(reference.hashes));
    expect(scoreMatch(polarity, reference).score).toBeGreaterThanOrEqual(reference.hashes.length);
  });

  it("keeps a stereo recording and its copy with the right channel inverted at the same offset", () => {
    // Two unrelated programmes as L and R: partly independent channels, the hard case for a mix.
    const right = programme({ seed: 5, seconds: 20, sampleRateHz: RATE });
    const stereo = fingerprintOf([clip, right], RATE);
    const trimmed = fingerprintOf([clip.subarray(5 * RATE), right.subarray(5 * RATE)], RATE);
    const flipped = fingerprintOf([clip.subarray(5 * RATE), right.subarray(5 * RATE).map((x) => -x)], RATE);
    expect(Array.from(flipped.hashes)).toEqual(Array.from(trimmed.hashes));
    const { score, offsetSeconds } = scoreMatch(flipped, stereo);
    expect(score).toBeGreaterThanOrEqual(DEFAULT_MIN_SCORE);
    expect(Math.abs(offsetSeconds! - 5)).toBeLessThanOrEqual(0.1);
  });

  it("treats non-finite samples as silence instead of failing", () => {
    const damaged = clip.slice();
    damaged.fill(Number.NaN, 5 * RATE, 5 * RATE + 100);
    const fp = fingerprintOf([damaged], RATE);
    for (const t of fp.times) expect(Number.isFinite(t)).toBe(true);
    expect(sharedFraction(reference, fp)).toBeGreaterThan(0.8);
  });

  it("rejects bad formats and bad blocks with clear errors", () => {
    expect(() => createFingerprinter(format(7999))).toThrow(/sampleRateHz must be in \[8000, 384000\], got 7999/);
    expect(() => createFingerprinter(format(400000))).toThrow(/sampleRateHz/);
    expect(() => createFingerprinter(format(Number.NaN))).toThrow(/sampleRateHz/);
    expect(() => createFingerprinter(format(48000, 0))).toThrow(/channels must be an integer ≥ 1, got 0/);
    expect(() => createFingerprinter(format(8000))).not.toThrow();
    expect(() => createFingerprinter(format(384000))).not.toThrow();
    for (const [rate, channels, ok] of [[7999, 1, false], [8000, 1, true], [384000, 8, true], [400000, 2, false], [48000, 0, false], [Number.NaN, 1, false]] as const) {
      expect(canFingerprint({ sampleRateHz: rate, channels }), `${rate} Hz, ${channels} channels`).toBe(ok);
    }

    const fp = createFingerprinter(format(48000, 2));
    const ch = new Float32Array(100);
    expect(() => fp.push({ channels: [ch], frames: 100, startFrame: 0 })).toThrow(/block has 1 channels, format says 2/);
    expect(() => fp.push({ channels: [ch, ch], frames: 101, startFrame: 0 })).toThrow(/channel 0 holds 100 samples, block says 101/);
    expect(() => fp.push({ channels: [ch, ch], frames: 100, startFrame: 5 })).toThrow(/expected startFrame 0, got 5/);
    fp.push({ channels: [ch, ch], frames: 100, startFrame: 0 });
    fp.finish();
    expect(() => fp.push({ channels: [ch, ch], frames: 100, startFrame: 100 })).toThrow(/after finish/);
    expect(() => fp.finish()).toThrow(/twice/);
  });
});

describe("fingerprint: offset histogram", () => {
  it("finds the candidate whose hits agree on one offset, and refines that offset", () => {
    const rnd = seededRandom(3);
    const candidates: number[] = [];
    const offsets: number[] = [];
    // Candidate 3: 30 hits on the hop grid at 5.0 s, split over two neighbouring bins as a fractional offset does.
    for (let i = 0; i < 30; i++) {
      candidates.push(3);
      offsets.push((i % 3 === 0 ? 216 : 215) * OFFSET_BIN_SECONDS);
    }
    // Chance collisions: 400 hits scattered over 10 candidates and ±40 s.
    for (let i = 0; i < 400; i++) {
      candidates.push(Math.floor(rnd() * 10));
      offsets.push((rnd() - 0.5) * 80);
    }
    const hits = { candidates: Uint32Array.from(candidates), offsetsSeconds: Float64Array.from(offsets), count: candidates.length };
    const best = scoreOffsetHits(hits, { minScore: 1 });
    expect(best[0].candidate).toBe(3);
    expect(best[0].score).toBeGreaterThanOrEqual(30);
    // Weighted mean of the two bins: (20 × 215 + 10 × 216) / 30 hops.
    expect(best[0].offsetSeconds).toBeCloseTo(((20 * 215 + 10 * 216) / 30) * OFFSET_BIN_SECONDS, 2);
    expect(best[1].score).toBeLessThan(6);
    expect(scoreOffsetHits(hits).map((c) => c.candidate)).toEqual([3]);
    expect(() => scoreOffsetHits(hits, { minScore: 0 })).toThrow(/minScore must be ≥ 1/);
  });

  it("scoreMatch of a fingerprint with itself counts every hash at offset 0", () => {
    const fp = fingerprintOf([programme({ seed: 4, seconds: 10, sampleRateHz: 22050 })], 22050);
    const self = scoreMatch(fp, fp);
    expect(self.score).toBeGreaterThanOrEqual(fp.hashes.length);
    expect(self.offsetSeconds).toBeCloseTo(0, 6);
    const none = scoreMatch(fp, { ...fp, hashes: new Uint32Array(0), times: new Float32Array(0) });
    expect(none).toEqual({ score: 0, offsetSeconds: null });
    expect(() => scoreMatch(fp, { ...fp, version: fp.version + 1 })).toThrow(/versions differ/);
  });
});

describe("fingerprint: encode / decode", () => {
  const fp = fingerprintOf([programme({ seed: 2, seconds: 20, sampleRateHz: 22050 })], 22050);

  it("round-trips a fingerprint exactly", () => {
    const back = decodeFingerprint(encodeFingerprint(fp));
    expect(back.version).toBe(fp.version);
    expect(back.durationSeconds).toBe(fp.durationSeconds);
    expect(Array.from(back.hashes)).toEqual(Array.from(fp.hashes));
    expect(Array.from(back.times)).toEqual(Array.from(fp.times));
  });

  it("round-trips off-grid times too, and the grid form is the compact one", () => {
    const times = fp.times.slice();
    times[0] += 0.001; // no longer a frame time: forces the plain float layout
    const offGrid = { ...fp, times };
    const back = decodeFingerprint(encodeFingerprint(offGrid));
    expect(Array.from(back.times)).toEqual(Array.from(times));
    // Grid: 4-byte hash + ~1-byte time delta; plain: 4 + 4 bytes.
    const n = fp.hashes.length;
    expect(encodeFingerprint(fp).length).toBeLessThan((4 / 3) * (20 + 6 * n) + 4);
    expect(encodeFingerprint(offGrid).length).toBe(Math.ceil((20 + 8 * n) / 3) * 4);
  });

  it("writes standard base64 (checked against Node's Buffer)", () => {
    const text = encodeFingerprint(fp);
    expect(text).toMatch(/^[A-Za-z0-9+/]*={0,2}$/);
    const bytes = Buffer.from(text, "base64");
    expect(bytes.toString("base64")).toBe(text);
    expect(bytes.subarray(0, 2).toString("latin1")).toBe("TF");
    expect(bytes.readUInt32LE(16)).toBe(fp.hashes.length);
    expect(bytes.readUInt32LE(20)).toBe(fp.hashes[0]);
  });

  it("stays within the report's fingerprint limit at the hash cap", () => {
    // Off-grid float times take 8 bytes an entry, the larger layout (grid deltas take 1–5, summing to < 2^32 frames).
    const n = MAX_FINGERPRINT_HASHES;
    const times = new Float32Array(n);
    for (let i = 0; i < n; i++) times[i] = 0.5 + i * 0.05;
    const largest = encodeFingerprint({ version: FINGERPRINT_VERSION, hashes: new Uint32Array(n).fill(0x1ffffff), times, durationSeconds: 5e4 });
    expect(largest.length).toBeGreaterThan((4 / 3) * 8 * n);
    expect(largest.length).toBeLessThanOrEqual(MAX_FINGERPRINT_CHARS);
  });

  it("encodes an empty fingerprint", () => {
    const empty = { version: FINGERPRINT_VERSION, hashes: new Uint32Array(0), times: new Float32Array(0), durationSeconds: 0 };
    expect(decodeFingerprint(encodeFingerprint(empty))).toEqual(empty);
  });

  it("rejects bad input with clear errors", () => {
    const good = encodeFingerprint(fp);
    const bytes = Buffer.from(good, "base64");
    const with_ = (edit: (b: Buffer) => void): string => {
      const b = Buffer.from(bytes);
      edit(b);
      return b.toString("base64");
    };
    expect(() => decodeFingerprint("abc")).toThrow(/multiple of 4/);
    expect(() => decodeFingerprint("ab!d")).toThrow(/not base64: character "!" at 2/);
    expect(() => decodeFingerprint("QUJD")).toThrow(/at least 20 bytes/);
    expect(() => decodeFingerprint(with_((b) => b.write("XX", 0, "latin1")))).toThrow(/bad magic/);
    expect(() => decodeFingerprint(with_((b) => (b[2] = 9)))).toThrow(/unsupported layout 9/);
    expect(() => decodeFingerprint(with_((b) => (b[3] = 0x80)))).toThrow(/unknown flags/);
    expect(() => decodeFingerprint(with_((b) => b.writeDoubleLE(Number.NaN, 8)))).toThrow(/durationSeconds/);
    expect(() => decodeFingerprint(with_((b) => b.writeUInt32LE(fp.hashes.length + 1000, 16)))).toThrow(/header says/);
    expect(() => decodeFingerprint(bytes.subarray(0, bytes.length - 3).toString("base64"))).toThrow(/ends inside entry|header says/);
    expect(() => decodeFingerprint(Buffer.concat([bytes, Buffer.from([1, 2])]).toString("base64"))).toThrow(/unexpected bytes/);
    expect(() => decodeFingerprint(42 as unknown as string)).toThrow(/expected a base64 string/);
    expect(() => encodeFingerprint({ ...fp, times: new Float32Array(1) })).toThrow(/hashes but 1 times/);
  });
});
