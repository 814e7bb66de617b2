/**
 * Issue #11: 50 unrelated synthesised files give no false match. Every file is looked up in an
 * index of all of them (plus two 48 kHz originals of fingerprintMatch.test.ts); apart from itself,
 * no candidate may reach DEFAULT_MIN_SCORE. Different seeds give unrelated note sequences,
 * syllables and noise hits, but the same generator, so shared musical habits (harmonic intervals,
 * formant ranges) are in play as they would be in one archive.
 */
import { describe, expect, it } from "vitest";
import { createFingerprintIndex, DEFAULT_MIN_SCORE, type Fingerprint } from "../../shared/src/fingerprint/index.ts";
import { fingerprintOf, programme } from "../fixtures/fingerprintSignals.ts";

const SECONDS = 40;
const UNRELATED = 50;
/** Synthesised at 16 kHz to keep the test fast; the fingerprint only reads 300 Hz–4 kHz. */
const UNRELATED_RATE = 16000;

describe("fingerprint: no false matches", () => {
  it(`${UNRELATED} unrelated programmes never match each other or the 48 kHz originals`, () => {
    const started = performance.now();
    const index = createFingerprintIndex();
    const all: [string, Fingerprint][] = [];
    for (let i = 0; i < UNRELATED; i++) {
      all.push([`unrelated-${i}`, fingerprintOf([programme({ seed: 100 + i, seconds: SECONDS, sampleRateHz: UNRELATED_RATE })], UNRELATED_RATE)]);
    }
    for (const seed of [1, 2]) all.push([`original-${seed}`, fingerprintOf([programme({ seed, seconds: SECONDS, sampleRateHz: 48000 })], 48000)]);
    for (const [id, fp] of all) index.add(id, fp);

    const falseScores: number[] = [];
    for (const [id, fp] of all) {
      const matches = index.lookup(fp, { minScore: 1 });
      expect(matches[0].id).toBe(id); // itself, every hash at offset 0
      falseScores.push(matches.find((m) => m.id !== id)?.score ?? 0);
    }
    const worst = Math.max(...falseScores);
    const mean = falseScores.reduce((a, b) => a + b, 0) / falseScores.length;
    console.log(
      `best false score per file over ${all.length} files: worst ${worst}, mean ${mean.toFixed(1)} (threshold ${DEFAULT_MIN_SCORE}); ` +
        `set-up and ${all.length} lookups ${((performance.now() - started) / 1000).toFixed(1)} s`,
    );
    expect(worst).toBeLessThan(DEFAULT_MIN_SCORE);
  }, 120_000);
});
