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
import { EXACT_COUNT_MAX } from "../../server/src/services/listTotals.ts";
import { seedBulkFileResults, type BulkSeedResult } from "../../scripts/seed-bulk.ts";
import { fileListQuerySchema, MATCHES_ONLY_SETTINGS, pageQuery, readsMatchesOnly, runPageSql, searchEstimate, walksSortIndex, type PageWindow } from "../../server/src/services/fileList.ts";
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
    // Every seeded readable file is a BWF: the container filter (issue #17) walks nearly the whole index.
    ["container=bwf&sort=truePeakDbtp&order=asc", "format ->> 'container' = 'bwf'"],
    ["container=flac&sort=path", "format ->> 'container' = 'flac'"],
    ["q=take-07&container=bwf&sort=durationSeconds", "path like '%take-07%' and format ->> 'container' = 'bwf'"],
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
    // The search is case-insensitive (`TAKE` finds "take"): the same rows as PostgreSQL's own ILIKE.
    ["q=TAKE-07&sort=path&order=desc", "path ilike '%take-07%'", "path desc, id desc"],
    ["verdict=pass&sort=truePeakDbtp&order=desc", "verdict = 'pass'", "true_peak_dbtp desc nulls last, id desc"],
    // Through the verdict-led level index (the error files have no levels, so their order is the id's).
    ["verdict=error&sort=integratedLufs&order=desc", "verdict = 'error'", "integrated_lufs desc nulls last, id desc"],
    // The container filter (issue #17): every readable seeded file is a BWF, the error rows have no format.
    ["container=bwf&sort=durationSeconds&order=asc", "format ->> 'container' = 'bwf'", "duration_seconds asc nulls first, id asc"],
    // A search with a container: left to the planner, not walked (fileList.ts, listFiles).
    ["q=take-07&container=bwf&sort=path&order=asc", "path ilike '%take-07%' and format ->> 'container' = 'bwf'", "path asc, id asc"],
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

/** Each plan node's type, index and cost (EXPLAIN's JSON tree, flattened). */
interface PlanNode {
  "Node Type": string;
  "Index Name"?: string;
  "Relation Name"?: string;
  "Total Cost": number;
  Plans?: PlanNode[];
}
const flatten = (n: PlanNode): PlanNode[] => [n, ...(n.Plans ?? []).flatMap(flatten)];
const describePlan = (nodes: PlanNode[]): string => nodes.map((n) => `${n["Node Type"]}${n["Index Name"] ? ` on ${n["Index Name"]}` : ""}`).join(" > ");

/** EXPLAIN of exactly the SQL the service runs for a page, run as it runs it (a forced walk, the matches only, or neither). */
async function pagePlan(query: Record<string, string>, window: PageWindow, walk: boolean, matchesOnly = false): Promise<PlanNode[]> {
  const { sql, bind } = pageQuery(fileListQuerySchema.parse(query), window, walk);
  const [row] = await runPageSql<{ "QUERY PLAN": [{ Plan: PlanNode }] }>(t.db.sequelize, sql, bind, matchesOnly, "explain (format json) ");
  return flatten(row["QUERY PLAN"][0].Plan);
}

const SORT_INDEX: Record<string, string> = {
  path: "file_results_list_path_idx",
  durationSeconds: "file_results_list_duration_idx",
  verdict: "file_results_list_verdict_idx",
  reviewState: "file_results_list_review_idx",
  integratedLufs: "file_results_list_lufs_idx",
  truePeakDbtp: "file_results_list_true_peak_idx",
  createdAt: "file_results_list_created_idx",
};

/** EXPLAIN ANALYZE of a page as the service runs it: its plan nodes with the rows each threw away. */
async function analysedPage(query: Record<string, string>): Promise<(PlanNode & { "Rows Removed by Filter"?: number })[]> {
  const { sql, bind } = pageQuery(fileListQuerySchema.parse(query), { offset: 0, limit: 50, flipped: false }, false);
  const [row] = await runPageSql<{ "QUERY PLAN": [{ Plan: PlanNode }] }>(t.db.sequelize, sql, bind, false, "explain (analyze, format json) ");
  return flatten(row["QUERY PLAN"][0].Plan);
}

it("reaches the first page of a rare verdict by a level, and of a finding by verdict, without walking past the other files", async () => {
  // Before the verdict-led indexes (migrations/…verdict-led-list-indexes.ts) these walks threw away ~92 % and
  // ~60 % of the rows (every file with levels or a duration, every passing file) before their first match.
  const cases: [Record<string, string>, string][] = [
    [{ verdict: "error", sort: "integratedLufs", order: "desc" }, "file_results_verdict_lufs_idx"],
    [{ verdict: "error", sort: "truePeakDbtp", order: "desc" }, "file_results_verdict_true_peak_idx"],
    [{ verdict: "error", sort: "durationSeconds", order: "desc" }, "file_results_verdict_duration_idx"],
    [{ finding: "hum", sort: "verdict", order: "asc" }, "file_results_findings_verdict_idx"],
  ];
  const wrong: string[] = [];
  for (const [query, index] of cases) {
    const nodes = await analysedPage(query);
    const thrownAway = nodes.reduce((sum, n) => sum + (n["Rows Removed by Filter"] ?? 0), 0);
    // A page of 51 rows: a hum file is 1 in ~7 of the files with findings, so a few hundred entries (common practice: 5 % of the rows as the bound).
    if (!nodes.some((n) => n["Index Name"] === index) || thrownAway > ROWS * 0.05) wrong.push(`${JSON.stringify(query)}: ${describePlan(nodes)}, ${thrownAway} rows thrown away`);
  }
  expect(wrong).toEqual([]);
});

it("estimates a search from a sample and walks the sort's covering index for a text many paths hold", async () => {
  // The texts `npm run load` searches, each in 1 path of 40 (2.5 %). PostgreSQL's own estimate (from ~100
  // histogram entries) put some of them at 0.01 %, read every match through the trigram index and counted
  // them inline: 0.25–0.37 s each at 1 M rows, where the walk finds a page in about 1 ms.
  const [[{ rows }]] = (await t.db.sequelize.query(`select reltuples::float8 as rows from pg_class where relname = 'file_results'`)) as [{ rows: number }[], unknown];
  expect(Math.abs(rows - ROWS) / ROWS).toBeLessThan(0.02);
  const wrong: string[] = [];
  for (let take = 0; take < 40; take++) {
    const q = `take-${String(take).padStart(2, "0")}`;
    const exact = await sqlCount(`path ilike '%${q}%'`);
    const estimate = await searchEstimate(t.db.sequelize, fileListQuerySchema.parse({ q }));
    // A sample of ~5 000 rows holds ~125 of a 2.5 % text: within ±30 % (binomial spread ±9 %).
    if (Math.abs(estimate - exact) / exact > 0.3) wrong.push(`${q}: estimated ${estimate} of ${exact}`);
    for (const sort of FILE_SORT_KEYS) {
      const query = { q, sort, order: take % 2 ? "asc" : "desc" };
      // Page 1, and page 20 by number (the deepest the load test opens).
      for (const window of [{ offset: 0, limit: 50, flipped: false }, { offset: 950, limit: 50, flipped: false }]) {
        if (!walksSortIndex(fileListQuerySchema.parse(query), window, estimate, rows)) {
          wrong.push(`${q} sort=${sort} offset ${window.offset}: not walked (estimate ${estimate})`);
          continue;
        }
        const nodes = await pagePlan(query, window, true);
        const walked = nodes.some((n) => n["Node Type"] === "Index Only Scan" && n["Index Name"] === SORT_INDEX[sort]);
        // One sort only: the page's 51 rows at the end, none of the matches before the LIMIT.
        const sorts = nodes.filter((n) => n["Node Type"] === "Sort").length;
        if (!walked || sorts !== 1 || nodes.some((n) => n["Node Type"].startsWith("Bitmap"))) wrong.push(`${q} sort=${sort} offset ${window.offset}: ${describePlan(nodes)}`);
      }
    }
  }
  expect(wrong).toEqual([]);
});

/**
 * The reels (40 paths each, 0.04 % of the rows) that one of the ~100 inner histogram entries of `path` holds: the
 * planner takes each for 1 % of the rows. Every entry is a seeded path, so every ANALYZE gives some; which
 * ones it gives is the sampling's choice (REEL-00123/ was one in about 1 run of 10, and the plan changed).
 */
async function overratedReels(): Promise<string[]> {
  const [[stats]] = (await t.db.sequelize.query(`select histogram_bounds::text as bounds from pg_stats where tablename = 'file_results' and attname = 'path'`)) as [{ bounds: string }[], unknown];
  const reels = [...stats.bounds.matchAll(/reel-(\d{5})\//g)].map((m) => `REEL-${m[1]}/`);
  // PostgreSQL tries the pattern on the entries between the first and the last (selfuncs.c, histogram_selectivity's n_skip).
  return [...new Set(reels.slice(1, -1))];
}

const plannerRows = async (q: string): Promise<number> => {
  const [[row]] = (await t.db.sequelize.query(`explain (format json) select 1 from file_results f where f.path ilike $1`, { bind: [`%${q}%`] })) as [{ "QUERY PLAN": [{ Plan: { "Plan Rows": number } }] }[], unknown];
  return row["QUERY PLAN"][0].Plan["Plan Rows"];
};

/** What is wrong with a page plan for a rare text: it must go through the trigram index, walk and scan nothing whole, and switch nothing off (whose cost would start the JIT). */
function rarePlanProblem(nodes: PlanNode[], jitAbove: number): string | null {
  const plan = describePlan(nodes);
  const ok = plan.includes("Bitmap Index Scan on file_results_path_trgm_idx") && !/Seq Scan|Index Only Scan|Index Scan on file_results_list/.test(plan) && nodes[0]["Total Cost"] < jitAbove;
  return ok ? null : `${plan} (cost ${nodes[0]["Total Cost"]})`;
}

const jitAboveCost = async (): Promise<number> => {
  const [[{ jitAbove }]] = (await t.db.sequelize.query(`select current_setting('jit_above_cost')::float8 as "jitAbove"`)) as [{ jitAbove: number }[], unknown];
  return jitAbove;
};

it("finds a text few paths hold through the trigram index, whatever ANALYZE sampled, and the same files as ILIKE does", async () => {
  const jitAbove = await jitAboveCost();
  const overrated = (await overratedReels()).slice(0, 3);
  // The case that made the plan change: the statistics put each of these reels at 25 times its 40 paths or more.
  expect(overrated.length).toBeGreaterThan(0);
  for (const q of overrated) expect(await plannerRows(q), q).toBeGreaterThanOrEqual(25 * 40);
  const wrong: string[] = [];
  for (const q of ["REEL-00123/", ...overrated]) {
    const query = fileListQuerySchema.parse({ q, sort: "createdAt" });
    // Its estimate is small, so it is counted at once (40), not walked (a page would be 125 000 entries
    // away), and read from its matches alone.
    expect(await searchEstimate(t.db.sequelize, query), q).toBeLessThan(EXACT_COUNT_MAX);
    expect(walksSortIndex(query, { offset: 0, limit: 50, flipped: false }, 40, ROWS)).toBe(false);
    expect(readsMatchesOnly(query, false, 40, true)).toBe(true);
    for (const sort of FILE_SORT_KEYS) {
      const problem = rarePlanProblem(await pagePlan({ q, sort }, { offset: 0, limit: 50, flipped: false }, false, true), jitAbove);
      if (problem) wrong.push(`${q} sort=${sort}: ${problem}`);
    }
    const res = await agent.get(`/api/files?q=${encodeURIComponent(q)}&sort=path&pageSize=100`);
    expect(res.status).toBe(200);
    const [rows] = (await t.db.sequelize.query(`select path from file_results where path ilike $1 order by path, id`, { bind: [`%${q}%`] })) as [{ path: string }[], unknown];
    expect(rows.length).toBe(40);
    expect(res.body).toMatchObject({ total: 40, totalIsEstimate: false });
    expect((res.body.items as { path: string }[]).map((f) => f.path)).toEqual(rows.map((r) => r.path));
  }
  expect(wrong).toEqual([]);
});

it("(control) the same check fails without the trigram index: the plan asked for needs it", async () => {
  const [q] = await overratedReels();
  const jitAbove = await jitAboveCost();
  const { sql, bind } = pageQuery(fileListQuerySchema.parse({ q, sort: "createdAt" }), { offset: 0, limit: 50, flipped: false }, false);
  const transaction = await t.db.sequelize.transaction();
  try {
    await t.db.sequelize.query(`drop index file_results_path_trgm_idx`, { transaction });
    await t.db.sequelize.query(MATCHES_ONLY_SETTINGS, { transaction });
    const [[row]] = (await t.db.sequelize.query(`explain (format json) ${sql}`, { bind, transaction })) as [{ "QUERY PLAN": [{ Plan: PlanNode }] }[], unknown];
    expect(rarePlanProblem(flatten(row["QUERY PLAN"][0].Plan), jitAbove)).not.toBeNull();
  } finally {
    await transaction.rollback();
  }
  // Rolled back: the index is there again.
  const [[{ n }]] = (await t.db.sequelize.query(`select count(*)::int as n from pg_indexes where indexname = 'file_results_path_trgm_idx'`)) as [{ n: number }[], unknown];
  expect(n).toBe(1);
});
