/**
 * The same-recording rule (matchPolicy.ts) on synthesised programmes: a shared 5 s ident at the head
 * of two otherwise unrelated 10 min programmes clears the chance threshold but is rejected as a small
 * share; a trimmed, noisy copy is accepted. Plus reading a fingerprint's version from its header.
 */
import { describe, expect, it } from "vitest";
import {
  DEFAULT_MIN_SCORE,
  encodeFingerprint,
  FINGERPRINT_VERSION,
  fingerprintVersionOf,
  isSameRecording,
  MIN_SHARED_FRACTION,
  scoreMatch,
} from "../../shared/src/fingerprint/index.ts";
import { fingerprintOf, programme, withNoise } from "../fixtures/fingerprintSignals.ts";

const RATE = 16000;

describe("isSameRecording", () => {
  const ident = programme({ seed: 40, seconds: 5, sampleRateHz: RATE });
  const withIdent = (seed: number): Float32Array => {
    const body = programme({ seed, seconds: 600, sampleRateHz: RATE });
    body.set(ident, 0);
    return body;
  };
  const a = withIdent(41);
  const b = withIdent(42);
  const fa = fingerprintOf([a], RATE);
  const fb = fingerprintOf([b], RATE);

  it("rejects two programmes that share only a 5 s ident, though it scores above chance", () => {
    const { score, offsetSeconds } = scoreMatch(fb, fa);
    expect(score).toBeGreaterThanOrEqual(DEFAULT_MIN_SCORE);
    expect(Math.abs(offsetSeconds!)).toBeLessThanOrEqual(0.1);
    expect(score).toBeLessThan(MIN_SHARED_FRACTION * Math.min(fa.hashes.length, fb.hashes.length));
    expect(isSameRecording(score, fb.hashes.length, fa.hashes.length)).toBe(false);
  });

  it("accepts a copy trimmed by 10 s with noise at 20 dB SNR", () => {
    const copy = fingerprintOf([withNoise(a.subarray(10 * RATE), RATE, 20, 7)], RATE);
    const { score, offsetSeconds } = scoreMatch(copy, fa);
    expect(Math.abs(offsetSeconds! - 10)).toBeLessThanOrEqual(0.1);
    expect(isSameRecording(score, copy.hashes.length, fa.hashes.length)).toBe(true);
  });

  it("applies both thresholds", () => {
    expect(isSameRecording(DEFAULT_MIN_SCORE - 1, 100, 100)).toBe(false);
    expect(isSameRecording(DEFAULT_MIN_SCORE, 100, 100)).toBe(true);
    expect(isSameRecording(40, 10_000, 5_000)).toBe(false);
    expect(isSameRecording(40, 10_000, 1_000)).toBe(true);
  });
});

describe("fingerprintVersionOf", () => {
  it("reads the version from the header alone", () => {
    const fp = fingerprintOf([programme({ seed: 43, seconds: 5, sampleRateHz: RATE })], RATE);
    const text = encodeFingerprint(fp);
    expect(fingerprintVersionOf(text)).toBe(FINGERPRINT_VERSION);
    expect(fingerprintVersionOf(encodeFingerprint({ ...fp, version: 7, times: fp.times.map((t) => t + 0.001) }))).toBe(7);
    expect(() => fingerprintVersionOf("QUJD")).toThrow(/at least 20 bytes/);
    expect(() => fingerprintVersionOf(Buffer.from("XX" + "\0".repeat(30)).toString("base64"))).toThrow(/bad magic/);
  });
});
