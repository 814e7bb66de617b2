/**
 * Fingerprint lookup against 10 000 indexed files in PostgreSQL (issue #11: under 50 ms).
 *
 * What is synthetic: fingerprinting 10 000 real clips would take many minutes, so 9 999 indexed files
 * are 40 s random peak constellations hashed by the real pairing code (hashLandmarks with the
 * fingerprinter's own zone), at the peak rate and with the anchor-frequency distribution of real
 * fingerprints of synthesised programmes, so posting lists have realistic lengths; they lack musical
 * structure, which would make some hashes more common. Their file results come from the bulk seeder
 * and their hash rows are inserted in bulk, not through ingest. One file is ingested for real through
 * POST /api/ingest, and every query is a real fingerprint. Real archives hold longer files (1 min–3 h),
 * so more rows per hash than here: see the README section on what the figure does and does not cover.
 */
import { afterAll, beforeAll, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { encodeFingerprint, FINGERPRINT_VERSION, type Fingerprint } from "@tidemark/shared/fingerprint/index";
import { seedBulkFileResults } from "../../scripts/seed-bulk.ts";
import { lookupFingerprint } from "../../server/src/services/duplicatesIndex.ts";
import { fingerprintOf, peakStatistics, programme, syntheticFingerprint, withNoise } from "../fixtures/fingerprintSignals.ts";
import { seededRandom } from "../fixtures/synth.ts";
import { ingest, scanReport } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

const FILES = 10_000;
const FILE_SECONDS = 40;
const RATE = 22050;
const LOOKUP_BUDGET_MS = 50; // issue #11
const ROUNDS = 10;

let t: TestApp;
let originalId: number;
let rows = 0;
const queries: { name: string; fp: Fingerprint }[] = [];
const log: string[] = [];

beforeAll(async () => {
  t = await startTestApp({ label: "dup10k" });
  const started = performance.now();
  const seeded = await seedBulkFileResults(t.db.sequelize, { files: FILES - 1 });
  const ids = (await t.db.sequelize.query<{ id: number }>(`select id from file_results order by id`, { type: QueryTypes.SELECT })).map((r) => r.id);
  expect(ids).toHaveLength(FILES - 1);

  const real = [1, 2, 3, 4].map((seed) => fingerprintOf([programme({ seed, seconds: FILE_SECONDS, sampleRateHz: RATE })], RATE));
  const stats = peakStatistics(real);
  const rnd = seededRandom(11);
  const sequelize = t.db.sequelize;
  await sequelize.query(`insert into fingerprints (file_result_id, version, hash_count, duration_seconds) select unnest($1::int[]), $2, 0, $3`, {
    bind: [ids, FINGERPRINT_VERSION, FILE_SECONDS],
  });
  // Hash rows in chunks of about 300 000, as one unnest of three arrays each.
  let fileIds: number[] = [];
  let hashes: number[] = [];
  let times: number[] = [];
  const counts: number[] = [];
  const flush = async (): Promise<void> => {
    if (hashes.length === 0) return;
    await sequelize.query(
      `insert into fingerprint_hashes (file_result_id, version, hash, time_seconds)
       select u.f, $1::smallint, u.h, u.t from unnest($2::int[], $3::int[], $4::real[]) as u(f, h, t)`,
      { bind: [FINGERPRINT_VERSION, fileIds, hashes, times] },
    );
    rows += hashes.length;
    fileIds = [];
    hashes = [];
    times = [];
  };
  for (const id of ids) {
    const fp = syntheticFingerprint(rnd, stats, FILE_SECONDS);
    counts.push(fp.hashes.length);
    for (let i = 0; i < fp.hashes.length; i++) {
      fileIds.push(id);
      hashes.push(fp.hashes[i]);
      times.push(fp.times[i]);
    }
    if (hashes.length >= 300_000) await flush();
  }
  await flush();
  await sequelize.query(`update fingerprints p set hash_count = c.n from unnest($1::int[], $2::int[]) as c(id, n) where p.file_result_id = c.id`, {
    bind: [ids, counts],
  });

  // The one real indexed file goes through the real ingest.
  const token = await t.tokenFor(await t.createUser("technician"));
  const report = scanReport([{ path: "reel-10000/side-a.wav" }]);
  report.files[0].fingerprint = encodeFingerprint(real[0]);
  const res = await ingest(t.app, token, { collection: "Lighthouse Choir Reels", batchKey: "dup10k-real", report });
  expect(res.status).toBe(201);
  originalId = (await sequelize.query<{ id: number }>(`select id from file_results where batch_id = $1`, { bind: [res.body.batchId], type: QueryTypes.SELECT }))[0].id;
  rows += real[0].hashes.length;
  // Statistics and the visibility map, as autovacuum would have them: lookups are index-only scans.
  await sequelize.query(`vacuum analyze fingerprints`);
  await sequelize.query(`vacuum analyze fingerprint_hashes`);
  log.push(`seeded ${FILES} fingerprinted files (${seeded.batches} batches), ${rows} hash rows, in ${((performance.now() - started) / 1000).toFixed(1)} s`);

  const x = programme({ seed: 1, seconds: FILE_SECONDS, sampleRateHz: RATE });
  queries.push(
    { name: "copy trimmed by 10 s, noise at 20 dB SNR", fp: fingerprintOf([withNoise(x.subarray(10 * RATE), RATE, 20, 5)], RATE) },
    ...real.slice(1).map((fp, i) => ({ name: `unrelated programme ${i + 2}`, fp })),
  );
}, 300_000);
afterAll(() => t.close());

it(`holds ${FILES} fingerprinted files`, async () => {
  const [c] = await t.db.sequelize.query<{ files: string; rows: string }>(
    `select (select count(*) from fingerprints where is_indexed) files, (select count(*) from fingerprint_hashes) rows`,
    { type: QueryTypes.SELECT },
  );
  expect(Number(c.files)).toBe(FILES);
  expect(Number(c.rows)).toBe(rows);
});

it("finds the one real copy among them with its offset, and nothing for unrelated programmes", async () => {
  const [copy, ...unrelated] = queries;
  const matches = await lookupFingerprint(t.db.sequelize, copy.fp, { limit: 10 });
  expect(matches.map((m) => m.fileResultId)).toEqual([originalId]);
  expect(Math.abs(matches[0].offsetSeconds - 10)).toBeLessThanOrEqual(0.1);
  for (const q of unrelated) expect(await lookupFingerprint(t.db.sequelize, q.fp, { limit: 10 }), q.name).toEqual([]);
  log.push(`true score ${matches[0].score} of ${copy.fp.hashes.length} hashes (offset ${matches[0].offsetSeconds.toFixed(3)} s)`);
});

it(`answers a lookup in under ${LOOKUP_BUDGET_MS} ms`, async () => {
  for (const q of queries) await lookupFingerprint(t.db.sequelize, q.fp, { limit: 10 }); // warm caches and the JIT
  const times: number[] = [];
  for (let round = 0; round < ROUNDS; round++) {
    for (const q of queries) {
      const started = performance.now();
      await lookupFingerprint(t.db.sequelize, q.fp, { limit: 10 });
      times.push(performance.now() - started);
    }
  }
  times.sort((a, b) => a - b);
  const p95 = times[Math.ceil(0.95 * times.length) - 1];
  const [plan] = await t.db.sequelize.query<{ "QUERY PLAN": string }>(
    `explain select file_result_id, time_seconds from fingerprint_hashes where version = $1::smallint and hash = $2`,
    { bind: [FINGERPRINT_VERSION, queries[0].fp.hashes[0]], type: QueryTypes.SELECT },
  );
  log.push(
    `lookup of a 30–40 s query (SQL, scoring, file details): median ${times[times.length >> 1].toFixed(1)} ms, p95 ${p95.toFixed(1)} ms, max ${times[times.length - 1].toFixed(1)} ms over ${times.length}; plan: ${plan["QUERY PLAN"]}`,
  );
  console.info(log.join("\n"));
  expect(p95).toBeLessThan(LOOKUP_BUDGET_MS);
}, 120_000);
