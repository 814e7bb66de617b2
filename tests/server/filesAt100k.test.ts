/**
 * GET /api/files with 100 000 file results: every sort key in both directions and every filter, p95
 * under 200 ms (issue #8's portal target), requests one after another through the whole app
 * (session lookup, query, JSON), paging as the portal does (page 1, then cursors). Issue #22's size,
 * 1 000 000 rows, is measured by `npm run load` (seeding it takes minutes, too long for every test run);
 * FILES_TEST_ROWS=1000000 runs this file at that size too. The plans are the same at both sizes (an
 * index-only walk of the sort's covering index, or a bitmap for a batch), only the walks are longer.
 */
import { loadavg } from "node:os";
import type TestAgent from "supertest/lib/agent.js";
import { afterAll, beforeAll, expect, it } from "vitest";
import { FILE_SORT_KEYS } from "@tidemark/shared/types/api";
import { seedBulkFileResults, type BulkSeedResult } from "../../scripts/seed-bulk.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

const ROWS = Number(process.env.FILES_TEST_ROWS ?? 100_000);
const SAMPLES = 20;
const P95_LIMIT_MS = 200;

let t: TestApp;
let agent: TestAgent;
let seeded: BulkSeedResult;

beforeAll(async () => {
  t = await startTestApp({ label: "files100k" });
  seeded = await seedBulkFileResults(t.db.sequelize, { files: ROWS });
  agent = (await t.signIn("supervisor")).agent;
}, 180_000 * Math.max(1, ROWS / 100_000));
afterAll(() => t.close());

const percentile = (xs: number[], p: number): number => [...xs].sort((a, b) => a - b)[Math.ceil(p * xs.length) - 1];

const sqlCount = async (where: string): Promise<number> => {
  const [[row]] = (await t.db.sequelize.query(`select count(*)::int as n from file_results where ${where}`)) as [{ n: number }[], unknown];
  return row.n;
};

/**
 * SAMPLES requests one after another, as the portal pages: page 1 (its total may be an estimate), then
 * Next by cursor, and (last) the deepest page by number, read from the far end.
 */
async function measure(query: string, total: number): Promise<{ p50: number; p95: number; total: number }> {
  const times: number[] = [];
  let next: string | null = null;
  let shownTotal = 0;
  for (let i = 0; i < SAMPLES; i++) {
    const lastPage = Math.max(1, Math.ceil(total / 50));
    const which = i === SAMPLES - 1 ? `page=${lastPage}` : i === 0 || !next ? "page=1" : `page=${i + 1}&after=${next}`;
    const started = performance.now();
    const res = await agent.get(`/api/files?${query}&pageSize=50&${which}`);
    times.push(performance.now() - started);
    expect(res.status, query).toBe(200);
    next = res.body.nextCursor;
    shownTotal = res.body.total;
  }
  return { p50: percentile(times, 0.5), p95: percentile(times, 0.95), total: shownTotal };
}

it(`seeds ${ROWS} rows`, () => {
  expect(seeded.files).toBe(ROWS);
});

it(`answers every sort and filter with p95 < ${P95_LIMIT_MS} ms`, async () => {
  const queries: [string, string][] = [];
  for (const sort of FILE_SORT_KEYS) for (const order of ["asc", "desc"]) queries.push([`sort=${sort}&order=${order}`, "true"]);
  queries.push(
    [`batch=${seeded.batchIds[17]}&sort=path`, `batch_id = ${seeded.batchIds[17]}`],
    [`collection=${seeded.collectionIds[1]}&sort=integratedLufs&order=desc`, `collection_id = ${seeded.collectionIds[1]}`],
    ["verdict=fail&sort=truePeakDbtp&order=desc", "verdict = 'fail'"],
    ["reviewState=flagged&sort=durationSeconds", "review_state = 'flagged'"],
    ["finding=hum&sort=path", "finding_codes @> array['hum']"],
    // The finding's files sit after every passing one in verdict order: the longest index walk.
    ["finding=hum&sort=verdict", "finding_codes @> array['hum']"],
    ["q=take-07&sort=createdAt&order=desc", "path like '%take-07%'"],
    [
      `verdict=warn&reviewState=pending&collection=${seeded.collectionIds[0]}&finding=dc-offset&sort=verdict`,
      `verdict = 'warn' and review_state = 'pending' and collection_id = ${seeded.collectionIds[0]} and finding_codes @> array['dc-offset']`,
    ],
  );
  const results: string[] = [];
  const slow: string[] = [];
  for (const [query, where] of queries) {
    const expected = await sqlCount(where);
    let { p50, p95: ms, total } = await measure(query, expected);
    // A shared CI machine can stall a couple of the 20 requests; a slow query is slow on a second round too.
    let note = "";
    if (ms >= P95_LIMIT_MS) {
      note = ` (first round p95 ${ms.toFixed(1)} ms)`;
      ({ p50, p95: ms, total } = await measure(query, expected));
    }
    results.push(`p50 ${p50.toFixed(1).padStart(6)} ms  p95 ${ms.toFixed(1).padStart(6)} ms  ${query} (total ${total})${note}`);
    if (ms >= P95_LIMIT_MS) slow.push(`${query}: p95 ${ms.toFixed(1)} ms${note}`);
  }
  console.info(`GET /api/files at ${ROWS} rows, ${SAMPLES} sequential requests each (load average ${loadavg()[0].toFixed(1)}):\n${results.join("\n")}`);
  expect(slow).toEqual([]);
}, 180_000 * Math.max(1, ROWS / 100_000));

it("returns the same pages as a plain ORDER BY, by number (flipped last pages too) and by cursor both ways", async () => {
  const cases: [string, string, string][] = [
    // [API query, SQL where, SQL order]
    ["finding=hum&sort=verdict&order=asc", "finding_codes @> array['hum']", "verdict asc, id asc"],
    ["verdict=pass&sort=truePeakDbtp&order=desc", "verdict = 'pass'", "true_peak_dbtp desc nulls last, id desc"],
    // NULL levels first: the first pages walk NULLs (stored as −Infinity), then cross to values.
    ["sort=integratedLufs&order=asc", "true", "integrated_lufs asc nulls first, id asc"],
    // NULL durations last: the last pages cross from values to NULLs.
    ["sort=durationSeconds&order=desc", "true", "duration_seconds desc nulls last, id desc"],
    // Whole batches share one created_at, to the microsecond: the id decides inside each.
    [`collection=${seeded.collectionIds[2]}&sort=createdAt&order=desc`, `collection_id = ${seeded.collectionIds[2]}`, "created_at desc, id desc"],
  ];
  const ids = (rows: unknown) => (rows as { id: number }[]).map((r) => r.id);
  const expected = async (where: string, order: string, offset: number) =>
    ids((await t.db.sequelize.query(`select id from file_results where ${where} order by ${order} limit 50 offset ${offset}`))[0]);
  for (const [query, where, order] of cases) {
    const total = await sqlCount(where);
    const lastPage = Math.ceil(total / 50);
    const get = async (rest: string) => {
      const res = await agent.get(`/api/files?${query}&pageSize=50&${rest}`);
      expect(res.status, `${query}&${rest}`).toBe(200);
      return res.body as { items: unknown; nextCursor: string | null; prevCursor: string | null };
    };
    const first = await get("page=1");
    expect(ids(first.items), query).toEqual(await expected(where, order, 0));
    expect(first.prevCursor).toBeNull();
    const second = await get(`page=2&after=${first.nextCursor}`);
    expect(ids(second.items), `${query} page 2 by cursor`).toEqual(await expected(where, order, 50));
    const third = await get(`page=3&after=${second.nextCursor}`);
    expect(ids(third.items), `${query} page 3 by cursor`).toEqual(await expected(where, order, 100));
    const backToSecond = await get(`page=2&before=${third.prevCursor}`);
    expect(ids(backToSecond.items), `${query} back to page 2`).toEqual(ids(second.items));
    const last = await get(`page=${lastPage}`);
    expect(ids(last.items), `${query} last page`).toEqual(await expected(where, order, (lastPage - 1) * 50));
    expect(last.nextCursor).toBeNull();
    const beforeLast = await get(`page=${lastPage - 1}&before=${last.prevCursor}`);
    expect(ids(beforeLast.items), `${query} before the last page`).toEqual(await expected(where, order, (lastPage - 2) * 50));
  }
});

it("answers a large new count with the planner's estimate, marked, and the exact total once counted", async () => {
  // A filter no earlier test used, with many matches: the first answer cannot have it cached.
  const query = `collection=${seeded.collectionIds[3]}&reviewState=pending&sort=path`;
  const exact = await sqlCount(`collection_id = ${seeded.collectionIds[3]} and review_state = 'pending'`);
  const first = (await agent.get(`/api/files?${query}`)).body as { total: number; totalIsEstimate: boolean };
  expect(first.totalIsEstimate).toBe(true);
  // The planner's estimate from column statistics: near, not equal (common practice: within a few per cent here).
  expect(Math.abs(first.total - exact) / exact).toBeLessThan(0.2);
  let later = first;
  for (let i = 0; i < 100 && later.totalIsEstimate; i++) {
    await new Promise((r) => setTimeout(r, 100));
    later = (await agent.get(`/api/files?${query}`)).body;
  }
  expect(later).toMatchObject({ total: exact, totalIsEstimate: false });
});
