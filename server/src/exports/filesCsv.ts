/** GET /api/exports/files.csv: one row per file result, streamed in id order. */
import type { Response } from "express";
import { stringify } from "csv-stringify";
import { Op, type WhereOptions } from "sequelize";
import { Batch, Collection, FileResult } from "../models/index.ts";
import { safeText } from "./csvCells.ts";
import { streamCsv } from "./streamRows.ts";

export const FILES_CSV_COLUMNS = [
  "file_result_id",
  "batch_id",
  "batch_key",
  "collection",
  "path",
  "size_bytes",
  "sha256",
  "container",
  "encoding",
  "sample_rate_hz",
  "bit_depth",
  "channels",
  "duration_seconds",
  "integrated_lufs",
  "true_peak_dbtp",
  "sample_peak_dbfs",
  "loudness_range_lu",
  "verdict",
  "review_state",
  "finding_codes",
  "scanned_at",
] as const;

export interface FilesCsvFilter {
  collection?: number;
  from?: Date;
  to?: Date;
}

const PAGE = 1000;

export async function writeFilesCsv(res: Response, filter: FilesCsvFilter): Promise<void> {
  const batchWhere: Record<string | symbol, unknown> = {};
  if (filter.from || filter.to) {
    batchWhere.startedAt = { ...(filter.from ? { [Op.gte]: filter.from } : {}), ...(filter.to ? { [Op.lte]: filter.to } : {}) };
  }
  const csv = stringify({ header: true, columns: [...FILES_CSV_COLUMNS], cast: { number: (n) => String(n) } });
  await streamCsv(
    res,
    csv,
    (afterId) =>
      FileResult.findAll({
        where: { id: { [Op.gt]: afterId }, ...(filter.collection ? { collectionId: filter.collection } : {}) } as WhereOptions<FileResult>,
        attributes: { exclude: ["metadata", "error", "worstFindings"] },
        include: [
          { model: Batch, as: "batch", attributes: ["id", "batchKey", "startedAt"], where: batchWhere as WhereOptions<Batch>, required: true },
          { model: Collection, as: "collection", attributes: ["id", "name"] },
        ],
        order: [["id", "ASC"]],
        limit: PAGE,
      }),
    (f) => ({
      file_result_id: f.id,
      batch_id: f.batchId,
      batch_key: safeText(f.batch?.batchKey),
      collection: safeText(f.collection?.name),
      path: safeText(f.path),
      size_bytes: f.sizeBytes,
      sha256: f.sha256 ?? "",
      container: f.format?.container ?? "",
      encoding: f.format?.encoding ?? "",
      sample_rate_hz: f.format?.sampleRateHz ?? "",
      bit_depth: f.format?.bitDepth ?? "",
      channels: f.format?.channels ?? "",
      duration_seconds: f.durationSeconds ?? "",
      integrated_lufs: f.integratedLufs ?? "",
      true_peak_dbtp: f.truePeakDbtp ?? "",
      sample_peak_dbfs: f.metrics?.samplePeakDbfs ?? "",
      loudness_range_lu: f.metrics?.loudnessRangeLu ?? "",
      verdict: f.verdict,
      review_state: f.reviewState,
      finding_codes: f.findingCodes.join(" "),
      scanned_at: f.batch?.startedAt.toISOString() ?? "",
    }),
  );
}
