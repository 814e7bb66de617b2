/**
 * The Files table query: filters and sorts on columns copied out of the report at ingest, each backed by
 * an index (migrations/…create-file-results.ts), so pages stay fast at 100 k rows.
 */
import { Op, type Order, type WhereOptions } from "sequelize";
import { z } from "zod";
import { FILE_SORT_KEYS, REVIEW_STATES, type FileSortKey } from "@tidemark/shared/types/api";
import { FINDING_CODES, VERDICTS } from "@tidemark/shared/types/report";
import { Collection, FileResult } from "../models/index.ts";
import { blankToUndefined, optionalEnum, optionalId, orderParam, pageParams } from "../queryParams.ts";

export const fileQuerySchema = z
  .object({
    batch: optionalId,
    collection: optionalId,
    verdict: optionalEnum(VERDICTS),
    reviewState: optionalEnum(REVIEW_STATES),
    finding: optionalEnum(FINDING_CODES),
    q: z.preprocess(blankToUndefined, z.string().trim().max(200).optional()),
    sort: optionalEnum(FILE_SORT_KEYS),
    order: orderParam,
    ...pageParams,
  })
  .strict();

export type FileListQuery = z.infer<typeof fileQuerySchema>;

/** Everything the list shows; the heavy JSON (metrics, metadata) stays in the table. */
export const LIST_ATTRIBUTES = [
  "id",
  "batchId",
  "collectionId",
  "path",
  "durationSeconds",
  "format",
  "verdict",
  "reviewState",
  "worstFindings",
  "integratedLufs",
  "truePeakDbtp",
  "spectrogramKey",
  "createdAt",
] as const;

const NULLABLE_SORTS = new Set<FileSortKey>(["durationSeconds", "integratedLufs", "truePeakDbtp"]);

/** LIKE wildcards in the search text are literal characters. */
const escapeLike = (s: string): string => s.replace(/[\\%_]/g, (c) => `\\${c}`);

export function fileWhere(query: Pick<FileListQuery, "batch" | "collection" | "verdict" | "reviewState" | "finding" | "q">): WhereOptions<FileResult> {
  const where: Record<string | symbol, unknown> = {};
  if (query.batch) where.batchId = query.batch;
  if (query.collection) where.collectionId = query.collection;
  if (query.verdict) where.verdict = query.verdict;
  if (query.reviewState) where.reviewState = query.reviewState;
  if (query.finding) where.findingCodes = { [Op.contains]: [query.finding] };
  if (query.q) where.path = { [Op.iLike]: `%${escapeLike(query.q)}%` };
  return where as WhereOptions<FileResult>;
}

/**
 * NULL (a quiet −∞ level, or no duration for an unreadable file) sorts as the smallest value: first when
 * ascending, last when descending. That is also one index scanned either way.
 */
export function fileOrder(sort: FileSortKey, order: "asc" | "desc"): Order {
  const dir = order.toUpperCase() as "ASC" | "DESC";
  const nulls = NULLABLE_SORTS.has(sort) ? (dir === "ASC" ? " NULLS FIRST" : " NULLS LAST") : "";
  return [
    [sort, `${dir}${nulls}`],
    ["id", dir],
  ];
}

export async function listFiles(query: FileListQuery): Promise<{ rows: FileResult[]; total: number }> {
  const where = fileWhere(query);
  const sort = query.sort ?? "createdAt";
  const order = query.order ?? (query.sort ? "asc" : "desc");
  const [total, rows] = await Promise.all([
    FileResult.count({ where }),
    FileResult.findAll({
      where,
      attributes: [...LIST_ATTRIBUTES],
      include: [{ model: Collection, as: "collection", attributes: ["id", "name"] }],
      order: fileOrder(sort, order),
      limit: query.pageSize,
      offset: (query.page - 1) * query.pageSize,
    }),
  ]);
  return { rows, total };
}
