/**
 * The Files table query: filters and sorts on columns copied out of the report at ingest, each backed by
 * an index (migrations/…create-file-results.ts), so pages stay fast at 100 k rows.
 * NULL (a quiet −∞ level, or no duration for an unreadable file) sorts as the smallest value: first when
 * ascending, last when descending, which is also one index scanned either way.
 */
import { QueryTypes, type Sequelize } from "sequelize";
import type { FileListQuery } from "@tidemark/shared/contracts/files";
import type { FileSortKey, FindingSummaryDto, ReviewState } from "@tidemark/shared/types/api";
import type { AudioFormat, Verdict } from "@tidemark/shared/types/report";
import type { ListTotals } from "./listTotals.ts";

const NULLABLE_SORTS = new Set<FileSortKey>(["durationSeconds", "integratedLufs", "truePeakDbtp"]);

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

const SORT_COLUMNS: Record<FileSortKey, string> = {
  path: "path",
  durationSeconds: "duration_seconds",
  verdict: "verdict",
  reviewState: "review_state",
  integratedLufs: "integrated_lufs",
  truePeakDbtp: "true_peak_dbtp",
  createdAt: "created_at",
};

/**
 * WHERE clause and bind values. Column names come from this code, values only ever as bind parameters.
 * Hand-written rather than through model finders: this is the hottest query, and model instances cost
 * more than the query itself at 50 rows a page.
 */
function listConditions(query: FileListQuery): { sql: string; bind: unknown[] } {
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
  if (query.q) add((n) => `f.path ilike ${n}`, `%${escapeLike(query.q)}%`);
  return { sql: conds.length ? `where ${conds.join(" and ")}` : "", bind };
}

function orderSql(column: string, id: string, sort: FileSortKey, order: "asc" | "desc"): string {
  const nulls = NULLABLE_SORTS.has(sort) ? (order === "asc" ? " nulls first" : " nulls last") : "";
  return `order by ${column} ${order}${nulls}, ${id} ${order}`;
}

const LIST_COLUMNS = `f.id, f.batch_id, f.collection_id, c.name as collection_name, f.path, f.duration_seconds, f.format, f.verdict,
  f.review_state, f.worst_findings, f.integrated_lufs, f.true_peak_dbtp, f.spectrogram_key is not null as has_spectrogram, f.created_at`;

/**
 * Below this many matches a filtered page is read "filter first": the matching rows' ids and sort
 * values are collected through the filter's own index, then sorted. Left to itself the planner would
 * often walk the sort index and discard non-matching rows, which is slow when the matches sit late in
 * that order (e.g. finding=hum sorted by verdict skips every passing file first: 45 ms against 13 ms).
 */
const FILTER_FIRST_MAX = 6_000;

/**
 * One page of the list. The total comes first (cached, see listTotals.ts), so a page past the middle is
 * read from the far end in the opposite order and reversed: the last page costs what the first does.
 */
export async function listFiles(sequelize: Sequelize, query: FileListQuery, totals: ListTotals): Promise<{ rows: FileListRow[]; total: number }> {
  const sort = query.sort ?? "createdAt";
  const order = query.order ?? (query.sort ? "asc" : "desc");
  const where = listConditions(query);
  const filterKey = JSON.stringify([query.batch, query.collection, query.verdict, query.reviewState, query.finding, query.q]);
  const total = await totals.count(filterKey, () =>
    sequelize
      .query<{ n: string }>(`select count(*) as n from file_results f ${where.sql}`, { bind: where.bind, type: QueryTypes.SELECT })
      .then(([row]) => Number(row.n)),
  );
  const offset = (query.page - 1) * query.pageSize;
  if (offset >= total) return { rows: [], total };
  const limit = Math.min(query.pageSize, total - offset);
  const fromEnd = total - offset - limit;
  const flipped = fromEnd < offset;
  const pageOrder = flipped ? (order === "asc" ? "desc" : "asc") : order;
  const bind = [...where.bind, limit, flipped ? fromEnd : offset];
  const [limitAt, offsetAt] = [`$${bind.length - 1}`, `$${bind.length}`];
  const column = SORT_COLUMNS[sort];
  const sql =
    where.bind.length > 0 && total <= FILTER_FIRST_MAX
      ? `with matches as materialized (select f.id, f.${column} as sort_value from file_results f ${where.sql}),
              page as (select id, sort_value from matches ${orderSql("sort_value", "id", sort, pageOrder)} limit ${limitAt} offset ${offsetAt})
         select ${LIST_COLUMNS}
           from page p join file_results f on f.id = p.id join collections c on c.id = f.collection_id
          ${orderSql("p.sort_value", "p.id", sort, pageOrder)}`
      : `select ${LIST_COLUMNS}
           from file_results f join collections c on c.id = f.collection_id
          ${where.sql}
          ${orderSql(`f.${column}`, "f.id", sort, pageOrder)}
          limit ${limitAt} offset ${offsetAt}`;
  const rows = await sequelize.query<FileListRow>(sql, { bind, type: QueryTypes.SELECT });
  if (flipped) rows.reverse();
  return { rows, total };
}
