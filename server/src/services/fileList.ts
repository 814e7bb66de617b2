/**
 * The Files table query: filters and sorts on columns copied out of the report at ingest. Each sort key
 * has one covering index, (sort value, id) INCLUDE the filter columns (migrations/…covering-list-indexes.ts),
 * so a page is an index-only walk to its 50 ids followed by 50 row reads, and stays fast at 1 M rows.
 * NULL (a quiet −∞ level, or no duration for an unreadable file) sorts as the smallest value: first when
 * ascending, last when descending (the sort columns store it as −Infinity).
 *
 * The path search (`q`: ILIKE, so case-insensitive, with `%` and `_` literal) is checked on the path each
 * covering index includes: a text many paths hold is found within the first few thousand entries of the
 * sort's walk (about 1 ms a page), a rare one through the trigram index (file_results_path_trgm_idx).
 * PostgreSQL cannot tell which a text is: it tries an infix pattern on ~100 histogram entries, and a text in
 * 2.5 % of 1 M paths often matched none of them, so it was taken for 100 rows, read through the trigram
 * index (every match from the table, then sorted: 0.25–0.37 s) and counted inline (as long again). So the
 * search's matches are estimated on a fixed sample of the table (searchEstimate), and a page whose walk
 * that estimate (or the exact count) puts within WALK_BUDGET entries is written so it can only walk. The
 * other way round, a text counted as few (readsMatchesOnly) is read through the trigram index whatever the
 * planner's estimate says: one histogram entry holding it put a 40-path text at 1 % of the rows, and the
 * planner then walked the sort's whole index for matches that were not there.
 *
 * Two ways to ask for a page: `page` (an offset: cost grows with depth, ~0.5 µs a skipped row) or a cursor
 * (`after` / `before`, from a previous page's nextCursor / prevCursor: a seek, the same cost at any depth).
 */
import { QueryTypes, type Sequelize } from "sequelize";
import type { z } from "zod";
import { fileQuerySchema } from "@tidemark/shared/contracts/files";
import { FILE_SORT_KEYS, type FileSortKey, type FindingSummaryDto, type ReviewState } from "@tidemark/shared/types/api";
import type { AudioFormat, Verdict } from "@tidemark/shared/types/report";
import { EXACT_COUNT_MAX, type Counting, type ListTotals } from "./listTotals.ts";

/** A position in one sort: the sort value as PostgreSQL prints it (exact, µs and all) and the row id. */
export interface FileCursor {
  sort: FileSortKey;
  order: "asc" | "desc";
  value: string;
  id: number;
}

export function encodeCursor(c: FileCursor): string {
  return Buffer.from(JSON.stringify([c.sort, c.order, c.value, c.id])).toString("base64url");
}

function decodeCursor(text: string): FileCursor | null {
  try {
    const v: unknown = JSON.parse(Buffer.from(text, "base64url").toString("utf8"));
    if (!Array.isArray(v) || v.length !== 4) return null;
    const [sort, order, value, id] = v as unknown[];
    if (!(FILE_SORT_KEYS as readonly unknown[]).includes(sort) || (order !== "asc" && order !== "desc")) return null;
    if (typeof value !== "string" || value.length > 1000 || !Number.isInteger(id) || (id as number) < 1) return null;
    return { sort: sort as FileSortKey, order, value, id: id as number };
  } catch {
    return null;
  }
}

/**
 * The shared Files query with its cursors decoded and checked on the server (the portal treats them as
 * opaque text): a cursor must decode, belong to the query's sort and order, and come alone.
 */
export const fileListQuerySchema = fileQuerySchema.transform((q, ctx) => {
  const decoded = (name: "after" | "before"): FileCursor | undefined => {
    const text = q[name];
    if (text === undefined) return undefined;
    const c = decodeCursor(text);
    if (!c) ctx.addIssue({ code: "custom", path: [name], message: "expected a cursor from a previous page's nextCursor or prevCursor" });
    return c ?? undefined;
  };
  const after = decoded("after");
  const before = decoded("before");
  if (after && before) ctx.addIssue({ code: "custom", path: ["before"], message: "give after or before, not both" });
  const cursor = after ?? before;
  const { sort, order } = effectiveSort(q);
  if (cursor && (cursor.sort !== sort || cursor.order !== order)) {
    ctx.addIssue({
      code: "custom",
      path: [after ? "after" : "before"],
      message: `the cursor belongs to sort=${cursor.sort}&order=${cursor.order}, this query is sort=${sort}&order=${order}`,
    });
  }
  return { ...q, after, before };
});

export type FileListQuery = z.output<typeof fileListQuerySchema>;

/** Newest first unless asked otherwise; a sort given without an order is ascending. */
function effectiveSort(q: { sort?: FileSortKey; order?: "asc" | "desc" }): { sort: FileSortKey; order: "asc" | "desc" } {
  return { sort: q.sort ?? "createdAt", order: q.order ?? (q.sort ? "asc" : "desc") };
}

/** LIKE wildcards in the search text are literal characters. */
const escapeLike = (s: string): string => s.replace(/[\\%_]/g, (c) => `\\${c}`);

/** One row of the list query (snake_case, as PostgreSQL returns it). */
export interface FileListRow {
  id: number;
  batch_id: number;
  collection_id: number;
  collection_name: string;
  path: string;
  duration_seconds: number | null;
  format: AudioFormat | null;
  verdict: Verdict;
  review_state: ReviewState;
  worst_findings: FindingSummaryDto[];
  integrated_lufs: number | null;
  true_peak_dbtp: number | null;
  has_spectrogram: boolean;
  created_at: Date;
}

export interface FileListPage {
  rows: FileListRow[];
  total: number;
  /** The planner's estimate (the exact count is being made in the background), not a count. */
  totalIsEstimate: boolean;
  nextCursor: string | null;
  prevCursor: string | null;
}

/** Sort column (the index key before id) and the type a cursor value is cast back to. */
const SORT_COLUMNS: Record<FileSortKey, { column: string; type: string }> = {
  path: { column: "path", type: "text" },
  durationSeconds: { column: "duration_sort", type: "float8" },
  verdict: { column: "verdict", type: "verdict" },
  reviewState: { column: "review_state", type: "review_state" },
  integratedLufs: { column: "lufs_sort", type: "float8" },
  truePeakDbtp: { column: "true_peak_sort", type: "float8" },
  createdAt: { column: "created_at", type: "timestamptz" },
};

/**
 * WHERE conditions and bind values. Column names come from this code, values only ever as bind parameters.
 * Hand-written rather than through model finders: this is the hottest query, and model instances cost
 * more than the query itself at 50 rows a page.
 */
function listConditions(query: FileListQuery): { conds: string[]; bind: unknown[] } {
  const bind: unknown[] = [];
  const conds: string[] = [];
  const add = (sql: (n: string) => string, value: unknown): void => {
    bind.push(value);
    conds.push(sql(`$${bind.length}`));
  };
  if (query.batch) add((n) => `f.batch_id = ${n}`, query.batch);
  if (query.collection) add((n) => `f.collection_id = ${n}`, query.collection);
  if (query.verdict) add((n) => `f.verdict = ${n}::verdict`, query.verdict);
  if (query.reviewState) add((n) => `f.review_state = ${n}::review_state`, query.reviewState);
  if (query.finding) add((n) => `f.finding_codes @> array[${n}::text]`, query.finding);
  if (query.container) add((n) => `(f.format ->> 'container') = ${n}`, query.container);
  if (query.q) add((n) => `f.path ilike ${n}`, `%${escapeLike(query.q)}%`);
  return { conds, bind };
}

const whereSql = (conds: string[]): string => (conds.length ? `where ${conds.join(" and ")}` : "");

const LIST_COLUMNS = `f.id, f.batch_id, f.collection_id, c.name as collection_name, f.path, f.duration_seconds, f.format, f.verdict,
  f.review_state, f.worst_findings, f.integrated_lufs, f.true_peak_dbtp, f.spectrogram_key is not null as has_spectrogram, f.created_at`;

type Row = FileListRow & { sort_text: string };

/**
 * A page of a search is walked along its sort's index when the walk should take at most this many index
 * entries, (offset + page) ÷ the share of rows that match: 25–100 ms at 0.5–2 µs an entry (EXPLAIN ANALYZE
 * at 1 M rows, quiet to busy 2-core machine), where reading all 25 000 matches of a 2.5 % text through the
 * trigram index costs 0.25 s. Past it the planner chooses (the trigram index, for a rare text).
 */
export const WALK_BUDGET = 50_000;

/** Rows the search estimate reads: ~0.5 % of the pages at 1 M rows (10–30 ms on a busy machine), the whole table up to 5 000 rows. */
const SAMPLE_ROWS = 5_000;

const tableRowsRead = new WeakMap<Sequelize, { rows: Promise<number>; at: number }>();

/**
 * Rows in file_results as of the last VACUUM or ANALYZE (the planner's own figure), 0 before the first.
 * It moves only with (auto)vacuum, so it is read at most every 10 s: a search page saves a round trip.
 */
function tableRows(sequelize: Sequelize): Promise<number> {
  const last = tableRowsRead.get(sequelize);
  if (last && Date.now() - last.at < 10_000) return last.rows;
  const rows = sequelize
    .query<{ rows: number }>(`select greatest(reltuples, 0)::float8 as rows from pg_class where oid = 'file_results'::regclass`, { type: QueryTypes.SELECT })
    .then(([row]) => row?.rows ?? 0);
  tableRowsRead.set(sequelize, { rows, at: Date.now() });
  // A failed read is not kept: the next search asks again.
  rows.catch(() => tableRowsRead.delete(sequelize));
  return rows;
}

/**
 * The matches of a query with a search, estimated from a fixed sample of the table's pages (TABLESAMPLE
 * SYSTEM, the same pages every time): the matching rows there, scaled up by the share of pages read.
 */
export async function searchEstimate(sequelize: Sequelize, query: FileListQuery): Promise<number> {
  const { conds, bind } = listConditions(query);
  const percent = `(select least(100, 100 * ${SAMPLE_ROWS} / greatest(reltuples, 1))::float8 from pg_class where oid = 'file_results'::regclass)`;
  const [row] = await sequelize.query<{ n: number }>(
    `select coalesce(count(*) filter (where ${conds.join(" and ")}) * 100 / ${percent}, 0)::float8 as n
       from file_results f tablesample system (${percent}) repeatable (0)`,
    { bind, type: QueryTypes.SELECT },
  );
  return Math.round(row.n);
}

/**
 * Whether a page of this query is a forced walk along its sort's covering index (pageQuery): a search
 * whose matches are a large enough share of the rows (the total, exact or estimated, over the table's
 * rows) for the page's walk to fit WALK_BUDGET.
 */
export function walksSortIndex(query: FileListQuery, { offset, limit }: PageWindow, matches: number, rows: number): boolean {
  // A container filter reads each row's format (no covering index holds it), so its pages are left to the
  // planner: forced along the covering index, a search with a container read `format` for every walked entry,
  // 1.3 s a page at 1 M rows (filesAt100k with FILES_TEST_ROWS=1000000); planned, p95 150 ms.
  if (query.q === undefined || query.container !== undefined || matches <= 0 || rows <= 0) return false;
  return ((offset + limit + 1) * rows) / matches <= WALK_BUDGET;
}

/**
 * Whether a page is read from the search's matches alone: a search counted exactly, at most EXACT_COUNT_MAX
 * matches, that is not walked. Its page comes from the trigram index (all its matches, then sorted), with
 * the planner allowed only bitmap scans (MATCHES_ONLY_SETTINGS), so its own estimate cannot choose another
 * plan. The planner's estimate comes from ~100 sampled histogram entries: a text in 40 of 100 000 paths that
 * one of them holds is taken for 1 % of the rows, and the sort's index was then walked to its end for the
 * 51 matches it expected within the first 5 000 entries: 45–80 ms a page at 100 000 rows (EXPLAIN ANALYZE,
 * 2026-12-05; ten times that at 1 M), where the trigram index finds the 40 in under 2 ms.
 */
export function readsMatchesOnly(query: FileListQuery, walk: boolean, total: number, exact: boolean): boolean {
  return query.q !== undefined && !walk && exact && total <= EXACT_COUNT_MAX;
}

/**
 * Bitmap scans only, for this transaction: the trigram index is then the only way to the search's matches,
 * and the page's row reads go through bitmaps on the primary keys. No plan node is switched off, so the cost
 * stays that of the plan (no JIT: tests/server/filesAt100k.test.ts checks it).
 */
export const MATCHES_ONLY_SETTINGS = `select set_config('enable_seqscan', 'off', true), set_config('enable_indexscan', 'off', true),
  set_config('enable_indexonlyscan', 'off', true)`;

/**
 * Runs a page's SQL as listFiles does: with `matchesOnly`, inside a transaction under MATCHES_ONLY_SETTINGS.
 * `prefix` (e.g. "explain (format json) ") lets tests ask about exactly what is run.
 */
export async function runPageSql<T extends object>(sequelize: Sequelize, sql: string, bind: unknown[], matchesOnly: boolean, prefix = ""): Promise<T[]> {
  if (!matchesOnly) return sequelize.query<T>(`${prefix}${sql}`, { bind, type: QueryTypes.SELECT });
  return sequelize.transaction(async (transaction) => {
    await sequelize.query(MATCHES_ONLY_SETTINGS, { transaction });
    return sequelize.query<T>(`${prefix}${sql}`, { bind, type: QueryTypes.SELECT, transaction });
  });
}

/** Where a page starts and which way it is read: what listFiles decides from the query and the total. */
export interface PageWindow {
  offset: number;
  limit: number;
  /** Read in the opposite order of the sort (a `before` cursor, or a page nearer the far end) and reversed. */
  flipped: boolean;
}

/** The columns a forced walk reads from the sort's covering index: the filter columns it INCLUDEs. */
const WALK_COLUMNS = "f.id, f.path, f.batch_id, f.collection_id, f.verdict, f.review_state, f.finding_codes";

/**
 * The SQL of one page (exported so tests can EXPLAIN exactly what is run). The page's ids come through the
 * sort's covering index (an index-only walk, or the planner's bitmap of a selective filter such as a batch
 * or a rare search text), then only those rows are read.
 *
 * `walk` forces the walk: the index is read in order in a subquery that only seeks the cursor, fenced by
 * OFFSET 0 so the filters stay outside it; planned for every row, the index-only walk is by far the
 * cheapest way to them in order, whatever the planner thinks the search matches, and the outer LIMIT stops
 * it after the page. (Switching the other plans off per transaction did the same with three more round
 * trips, and the penalty of a switched-off sort passed jit_above_cost: 0.28 s of JIT a page.)
 *
 * `withVersion` adds file_list_version's version to every row (an InitPlan, read once, in the page's own
 * snapshot), so a page whose shape does not depend on the total needs no separate round trip for it.
 */
export function pageQuery(
  query: FileListQuery,
  { offset, limit, flipped }: PageWindow,
  walk = false,
  { withVersion = false }: { withVersion?: boolean } = {},
): { sql: string; bind: unknown[] } {
  const { sort, order } = effectiveSort(query);
  const { column, type } = SORT_COLUMNS[sort];
  const { conds, bind } = listConditions(query);
  // Implied by any finding filter, stated so the planner may walk file_results_findings_verdict_idx (only files
  // with findings): by verdict ascending, the sort's own index passed the ≈600 000 passing files first.
  if (query.finding) conds.push(`f.finding_codes <> '{}'`);
  const cursor = query.after ?? query.before;
  const dir = flipped ? (order === "asc" ? "desc" : "asc") : order;
  const param = (v: unknown): string => {
    bind.push(v);
    return `$${bind.length}`;
  };
  const seek = cursor ? `(f.${column}, f.id) ${dir === "asc" ? ">" : "<"} (${param(cursor.value)}::${type}, ${param(cursor.id)}::int)` : null;
  // One row more than the page says whether there is another page in the reading direction.
  const fetch = limit + 1;
  const orderBy = (v: string, id: string): string => `order by ${v} ${dir}, ${id} ${dir}`;
  const source = walk
    ? `(select ${WALK_COLUMNS}, f.${column} as sort_value from file_results f ${whereSql(seek ? [seek] : [])}
         ${orderBy(`f.${column}`, "f.id")} offset 0) f ${whereSql(conds)} ${orderBy("f.sort_value", "f.id")}`
    : `file_results f ${whereSql(seek ? [...conds, seek] : conds)} ${orderBy(`f.${column}`, "f.id")}`;
  const page = `page as materialized (select f.id, ${walk ? "f.sort_value" : `f.${column} as sort_value`} from ${source}
      limit ${param(fetch)} offset ${param(offset)})`;
  const sql = `with ${page}
    select ${LIST_COLUMNS}, p.sort_value::text as sort_text${withVersion ? ", (select version from file_list_version) as list_version" : ""}
      from page p join file_results f on f.id = p.id join collections c on c.id = f.collection_id
     ${orderBy("p.sort_value", "p.id")}`;
  return { sql, bind };
}

/**
 * One page of the list. Without a cursor, a page past the middle (when the total is exact) is read from
 * the far end in the opposite order and reversed: the last page costs what the first does.
 *
 * A page by cursor, or the first page, of a query without a search does not depend on the total: it is
 * read first, with the version the totals cache checks against, which saves one of the request's round
 * trips to PostgreSQL (each costs the server ≈ 0.3 ms of CPU, most of it the socket write that wakes a
 * database process; measured with --cpu-prof under `npm run load`). Other pages need the total first
 * (a page number is read from the nearer end; a search's total decides whether its page walks).
 */
export async function listFiles(sequelize: Sequelize, query: FileListQuery, totals: ListTotals): Promise<FileListPage> {
  const { sort, order } = effectiveSort(query);
  const filters = listConditions(query);
  const filterKey = JSON.stringify([query.batch, query.collection, query.verdict, query.reviewState, query.finding, query.q, query.container]);
  const filterSql = whereSql(filters.conds);
  const countSql = `select count(*) as n from file_results f ${filterSql}`;
  const counting: Counting = {
    // On one core: a parallel count of a million rows would take every core from the pages being served.
    count: () =>
      sequelize.transaction(async (transaction) => {
        await sequelize.query(`set local max_parallel_workers_per_gather = 0`, { transaction });
        const [row] = await sequelize.query<{ n: string }>(countSql, { bind: filters.bind, type: QueryTypes.SELECT, transaction });
        return Number(row.n);
      }),
    // A set of at most EXACT_COUNT_MAX expected rows is too small for parallel workers (their setup cost
    // alone outweighs it), so it needs no SET LOCAL: one round trip instead of four (BEGIN, SET LOCAL,
    // SELECT, COMMIT). With the version read in the page's query, a batch's first page (every batch view is
    // a new filter) went from nine round trips to five; each costs the server ≈ 0.3 ms of CPU under load.
    countInline: () => sequelize.query<{ n: string }>(countSql, { bind: filters.bind, type: QueryTypes.SELECT }).then(([row]) => Number(row.n)),
    estimate: () =>
      query.q !== undefined
        ? searchEstimate(sequelize, query)
        : sequelize
            .query<{ "QUERY PLAN": [{ Plan: { "Plan Rows": number } }] }>(`explain (format json) select 1 from file_results f ${filterSql}`, {
              bind: filters.bind,
              type: QueryTypes.SELECT,
            })
            .then(([row]) => Math.round(row["QUERY PLAN"][0].Plan["Plan Rows"])),
  };

  const cursor = query.after ?? query.before;
  const backwards = query.before !== undefined;
  const pageSize = query.pageSize;
  const at = (r: Row | undefined): string | null => (r ? encodeCursor({ sort, order, value: r.sort_text, id: r.id }) : null);

  if (query.q === undefined && (cursor !== undefined || query.page === 1)) {
    const window = { offset: 0, limit: pageSize, flipped: backwards };
    const { sql, bind } = pageQuery(query, window, false, { withVersion: true });
    const fetched = await sequelize.query<Row & { list_version: string }>(sql, { bind, type: QueryTypes.SELECT });
    // An empty page carries no version: the totals read it themselves.
    const { total, exact } = await totals.count(filterKey, counting, fetched[0]?.list_version);
    const more = fetched.length > pageSize;
    const rows = fetched.slice(0, pageSize).map(({ list_version: _, ...r }) => r);
    if (backwards) rows.reverse();
    // Reading forwards, "more" is about the next page; reading backwards (a `before` cursor) about the previous one.
    return {
      rows: rows.map(({ sort_text: _, ...r }) => r),
      total,
      totalIsEstimate: !exact,
      nextCursor: (backwards || more) ? at(rows[rows.length - 1]) : null,
      prevCursor: (backwards ? more : cursor !== undefined) ? at(rows[0]) : null,
    };
  }

  const { total, exact } = await totals.count(filterKey, counting);
  let offset = cursor ? 0 : (query.page - 1) * pageSize;
  let limit = pageSize;
  let flipped = backwards;
  if (!cursor && exact) {
    if (offset >= total) return { rows: [], total, totalIsEstimate: false, nextCursor: null, prevCursor: null };
    limit = Math.min(pageSize, total - offset);
    const fromEnd = total - offset - limit;
    if (fromEnd < offset) [flipped, offset] = [true, fromEnd];
  }
  const window = { offset, limit, flipped };
  const walk = query.q !== undefined && walksSortIndex(query, window, total, await tableRows(sequelize));
  const { sql, bind } = pageQuery(query, window, walk);
  const fetched = await runPageSql<Row>(sequelize, sql, bind, readsMatchesOnly(query, walk, total, exact));
  const more = fetched.length > limit;
  const rows = fetched.slice(0, limit);
  if (flipped) rows.reverse();
  // Reading forwards, "more" is about the next page; reading backwards (a `before` cursor, or a flipped
  // page number) it is about the previous one.
  const hasNext = flipped ? (cursor ? true : offset > 0) : more;
  const hasPrev = flipped ? more : cursor ? true : offset > 0;
  return {
    rows: rows.map(({ sort_text: _, ...r }) => r),
    total,
    totalIsEstimate: !exact,
    nextCursor: hasNext ? at(rows[rows.length - 1]) : null,
    prevCursor: hasPrev ? at(rows[0]) : null,
  };
}
