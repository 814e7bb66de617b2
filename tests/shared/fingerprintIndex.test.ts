/**
 * The in-memory index at archive scale (issue #11: lookup under 50 ms with 10 000 files indexed).
 *
 * What is synthetic here: fingerprinting 10 000 real clips would take many minutes, so 9 999 of
 * the indexed files are random peak constellations, hashed by the real pairing code
 * (hashLandmarks with the fingerprinter's own zone). Their peak rate and peak frequencies are drawn
 * from real fingerprints of synthesised programmes, so posting lists have realistic lengths for
 * the anchor frequencies; what they lack is musical structure (repeated intervals), which would make
 * some hashes more common. One indexed file and every query are real fingerprints.
 */
import { beforeAll, describe, expect, it } from "vitest";
import {
  createFingerprintIndex,
  DEFAULT_MIN_SCORE,
  FINGERPRINT_VERSION,
  type Fingerprint,
  type FingerprintIndex,
} from "../../shared/src/fingerprint/index.ts";
import { fingerprintOf, peakStatistics, programme, syntheticFingerprint } from "../fixtures/fingerprintSignals.ts";
import { seededRandom } from "../fixtures/synth.ts";

const RATE = 22050;
const FILES = 10_000;
const FILE_SECONDS = 40;
const LOOKUP_BUDGET_MS = 50; // issue #11

let index: FingerprintIndex;
const queries: Fingerprint[] = [];
const log: string[] = [];

beforeAll(() => {
  const real = [1, 2, 3, 4].map((seed) => fingerprintOf([programme({ seed, seconds: FILE_SECONDS, sampleRateHz: RATE })], RATE));
  const stats = peakStatistics(real);
  index = createFingerprintIndex();
  const rnd = seededRandom(11);
  const started = performance.now();
  index.add("real-1", real[0]);
  for (let i = 1; i < FILES; i++) index.add(`synthetic-${i}`, syntheticFingerprint(rnd, stats, FILE_SECONDS));
  log.push(`indexed ${index.files} files, ${index.rows} rows (${stats.peaksPerSecond.toFixed(2)} peaks/s) in ${(performance.now() - started).toFixed(0)} ms`);
  // Queries: a trimmed copy of the indexed real file, and real files that are not indexed.
  const x = programme({ seed: 1, seconds: FILE_SECONDS, sampleRateHz: RATE });
  queries.push(fingerprintOf([x.subarray(10 * RATE)], RATE), ...real.slice(1));
}, 120_000);

describe("fingerprint index at 10 000 files", () => {
  it("finds the one real copy among 10 000 files, with its offset", () => {
    const matches = index.lookup(queries[0], { minScore: 1 });
    expect(matches[0].id).toBe("real-1");
    expect(matches[0].score).toBeGreaterThanOrEqual(DEFAULT_MIN_SCORE);
    expect(Math.abs(matches[0].offsetSeconds - 10)).toBeLessThanOrEqual(0.1);
    expect(matches[1]?.score ?? 0).toBeLessThan(DEFAULT_MIN_SCORE);
    for (const q of queries.slice(1)) expect(index.lookup(q)).toEqual([]);
    const worstFalse = Math.max(...queries.map((q) => index.lookup(q, { minScore: 1 }).find((m) => m.id !== "real-1")?.score ?? 0));
    log.push(`true score ${matches[0].score} (offset ${matches[0].offsetSeconds.toFixed(3)} s); best false score over ${queries.length} queries ${worstFalse}`);
  });

  it(`answers a lookup in under ${LOOKUP_BUDGET_MS} ms`, () => {
    for (const q of queries) index.lookup(q); // warm up the JIT
    const times: number[] = [];
    for (let round = 0; round < 25; round++) {
      for (const q of queries) {
        const t = performance.now();
        index.lookup(q);
        times.push(performance.now() - t);
      }
    }
    times.sort((a, b) => a - b);
    log.push(`lookup of a 30–40 s query: median ${times[times.length >> 1].toFixed(2)} ms, p95 ${times[Math.floor(times.length * 0.95)].toFixed(2)} ms, max ${times[times.length - 1].toFixed(2)} ms over ${times.length}`);
    console.log(log.join("\n"));
    // p95, not the max: on a shared 2-core machine a few lookups of a hundred may be preempted or meet a GC pause.
    expect(times[Math.floor(times.length * 0.95)]).toBeLessThan(LOOKUP_BUDGET_MS);
  });
});

describe("fingerprint index API", () => {
  const fp = fingerprintOf([programme({ seed: 9, seconds: 10, sampleRateHz: RATE })], RATE);

  it("is empty-safe and keeps ids unique", () => {
    const small = createFingerprintIndex();
    expect(small.lookup(fp)).toEqual([]);
    small.add("a", fp);
    expect(small.files).toBe(1);
    expect(small.rows).toBe(fp.hashes.length);
    expect(() => small.add("a", fp)).toThrow(/"a" is already indexed/);
    expect(() => small.add("", fp)).toThrow(/non-empty string/);
    const [hit] = small.lookup(fp);
    expect(hit.id).toBe("a");
    expect(hit.score).toBeGreaterThanOrEqual(fp.hashes.length);
    expect(hit.offsetSeconds).toBeCloseTo(0, 6);
  });

  it("refuses fingerprints of another version or a broken shape", () => {
    const small = createFingerprintIndex();
    expect(() => small.add("old", { ...fp, version: FINGERPRINT_VERSION + 1 })).toThrow(/version .* re-scan/);
    expect(() => small.lookup({ ...fp, times: new Float32Array(2) })).toThrow(/hashes but 2 times/);
  });

  it("skips hashes with more rows than maxRowsPerHash", () => {
    const small = createFingerprintIndex();
    small.add("a", fp);
    small.add("b", fp);
    expect(small.lookup(fp).map((m) => m.id)).toEqual(["a", "b"]);
    expect(small.lookup(fp, { maxRowsPerHash: 1 })).toEqual([]);
  });
});
