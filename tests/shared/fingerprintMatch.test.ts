/**
 * Issue #11's robustness cases on synthesised 40 s programmes: each copy must find its original
 * with the right offset (±0.1 s), above DEFAULT_MIN_SCORE, with every distractor below it.
 * The 44.1 kHz and low-passed copies are made by sox (Debian's package), not by our resampler.
 * The 50-unrelated-files case is in fingerprintFalseMatch.test.ts (runs in parallel).
 */
import { beforeAll, describe, expect, it } from "vitest";
import {
  createFingerprintIndex,
  DEFAULT_MIN_SCORE,
  scoreMatch,
  type Fingerprint,
  type FingerprintIndex,
} from "../../shared/src/fingerprint/index.ts";
import { fingerprintOf, programme, soxMono, withNoise } from "../fixtures/fingerprintSignals.ts";
import { gainDb, rmsDbfs } from "../fixtures/synth.ts";

const RATE = 48000;
const SECONDS = 40;
const SEEDS = [1, 2];
/** Distractors are synthesised at 16 kHz to keep the test fast; the fingerprint only reads 300 Hz–4 kHz. */
const DISTRACTOR_RATE = 16000;
const DISTRACTORS = 10;
const OFFSET_TOLERANCE_SECONDS = 0.1; // issue #11

interface Copy {
  name: string;
  samples: Float32Array;
  rate: number;
  /** Where the copy's t = 0 falls in the original. */
  expectedOffsetSeconds: number;
}

const COPY_NAMES = [
  "+6 dB gain",
  "white noise at 20 dB SNR",
  "resampled to 44.1 kHz (sox)",
  "low-passed at 10 kHz (sox)",
  "resampled to 8 kHz (sox)",
  "10 s excerpt from 15 s, upsampled to 384 kHz (sox)",
  "first 10 s trimmed",
  "10 s excerpt from 15 s",
  "all at once: noise, low-pass, 44.1 kHz, trimmed",
];

function copiesOf(x: Float32Array, seed: number): Copy[] {
  const copies: Copy[] = [
    { name: "+6 dB gain", samples: gainDb(x, 6), rate: RATE, expectedOffsetSeconds: 0 },
    { name: "white noise at 20 dB SNR", samples: withNoise(x, RATE, 20, 1000 + seed), rate: RATE, expectedOffsetSeconds: 0 },
    { name: "resampled to 44.1 kHz (sox)", samples: soxMono(x, RATE, ["rate", "-v", "44100"]), rate: 44100, expectedOffsetSeconds: 0 },
    { name: "low-passed at 10 kHz (sox)", samples: soxMono(x, RATE, ["sinc", "-10000"]), rate: RATE, expectedOffsetSeconds: 0 },
    // The ends of the supported range: 8 kHz keeps only up to ~3.6 kHz of the band.
    { name: "resampled to 8 kHz (sox)", samples: soxMono(x, RATE, ["rate", "-v", "8000"]), rate: 8000, expectedOffsetSeconds: 0 },
    {
      name: "10 s excerpt from 15 s, upsampled to 384 kHz (sox)",
      samples: soxMono(x.subarray(15 * RATE, 25 * RATE), RATE, ["rate", "-v", "384000"]),
      rate: 384000,
      expectedOffsetSeconds: 15,
    },
    { name: "first 10 s trimmed", samples: x.subarray(10 * RATE), rate: RATE, expectedOffsetSeconds: 10 },
    { name: "10 s excerpt from 15 s", samples: x.subarray(15 * RATE, 25 * RATE), rate: RATE, expectedOffsetSeconds: 15 },
    {
      name: "all at once: noise, low-pass, 44.1 kHz, trimmed",
      samples: soxMono(withNoise(x, RATE, 20, 2000 + seed), RATE, ["sinc", "-10000", "rate", "-v", "44100", "trim", "10"]),
      rate: 44100,
      expectedOffsetSeconds: 10,
    },
  ];
  expect(copies.map((c) => c.name)).toEqual(COPY_NAMES);
  return copies;
}

const originals = new Map<number, { samples: Float32Array; fp: Fingerprint; copies: Copy[] }>();
let index: FingerprintIndex;
const table: string[] = [];

beforeAll(() => {
  const started = performance.now();
  index = createFingerprintIndex();
  for (const seed of SEEDS) {
    const samples = programme({ seed, seconds: SECONDS, sampleRateHz: RATE });
    const fp = fingerprintOf([samples], RATE);
    originals.set(seed, { samples, fp, copies: copiesOf(samples, seed) });
    index.add(`original-${seed}`, fp);
  }
  for (let i = 0; i < DISTRACTORS; i++) {
    const fp = fingerprintOf([programme({ seed: 200 + i, seconds: SECONDS, sampleRateHz: DISTRACTOR_RATE })], DISTRACTOR_RATE);
    index.add(`distractor-${i}`, fp);
  }
  table.push(`set-up (synthesis, sox, fingerprints of ${SEEDS.length} originals, their copies' audio, ${DISTRACTORS} distractors): ${((performance.now() - started) / 1000).toFixed(1)} s`);
}, 120_000);

describe("fingerprint matching on synthesised programmes", () => {
  it("the copies are what they claim to be", () => {
    for (const seed of SEEDS) {
      const { samples, copies } = originals.get(seed)!;
      const byName = new Map(copies.map((c) => [c.name, c]));
      const resampled = byName.get("resampled to 44.1 kHz (sox)")!;
      expect(Math.abs(resampled.samples.length - SECONDS * 44100)).toBeLessThanOrEqual(1);
      const noisy = byName.get("white noise at 20 dB SNR")!.samples;
      const noise = noisy.map((v, i) => v - samples[i]);
      expect(rmsDbfs(samples) - rmsDbfs(noise)).toBeCloseTo(20, 1);
      // The low-pass must remove something real (cymbal-like noise and upper harmonics reach 24 kHz).
      const lowPassed = byName.get("low-passed at 10 kHz (sox)")!.samples;
      expect(rmsDbfs(lowPassed.map((v, i) => v - samples[i])) - rmsDbfs(samples)).toBeGreaterThan(-40);
    }
  });

  for (const seed of SEEDS) {
    for (const copyName of COPY_NAMES) {
      it(`seed ${seed}: ${copyName} finds its original at the right offset`, () => {
        const copy = originals.get(seed)!.copies.find((c) => c.name === copyName)!;
        const fp = fingerprintOf([copy.samples], copy.rate);
        const matches = index.lookup(fp, { minScore: 1 });
        const best = matches[0];
        const bestFalse = matches.find((m) => m.id !== `original-${seed}`)?.score ?? 0;
        table.push(`${`seed ${seed}, ${copyName}`.padEnd(58)} true ${String(best.score).padStart(4)} of ${String(fp.hashes.length).padStart(3)} hashes, offset ${best.offsetSeconds.toFixed(3)} s; best false ${bestFalse}`);
        expect(best.id).toBe(`original-${seed}`);
        expect(best.score).toBeGreaterThanOrEqual(DEFAULT_MIN_SCORE);
        expect(Math.abs(best.offsetSeconds - copy.expectedOffsetSeconds)).toBeLessThanOrEqual(OFFSET_TOLERANCE_SECONDS);
        expect(bestFalse).toBeLessThan(DEFAULT_MIN_SCORE);
        expect(index.lookup(fp).map((m) => m.id)).toEqual([`original-${seed}`]);
      });
    }
  }

  it("the offset is signed: the original found in its trimmed copy sits 10 s before it", () => {
    const { samples, fp } = originals.get(SEEDS[0])!;
    const trimmed = fingerprintOf([samples.subarray(10 * RATE)], RATE);
    const { score, offsetSeconds } = scoreMatch(fp, trimmed);
    expect(score).toBeGreaterThanOrEqual(DEFAULT_MIN_SCORE);
    expect(Math.abs(offsetSeconds! + 10)).toBeLessThanOrEqual(OFFSET_TOLERANCE_SECONDS);
    console.log(table.join("\n"));
  });
});
