/** GET /api/exports/files.csv: one row per file result, streamed in id order, in the CLI's CSV layout. */
import type { Response } from "express";
import { stringify } from "csv-stringify";
import { Op, type WhereOptions } from "sequelize";
import { CSV_STRINGIFY_OPTIONS, csvRecord, type CsvFileRow } from "@tidemark/shared/report/csvReport";
import { fileImageUrl } from "../fileImageUrls.ts";
import { Batch, Collection, FileResult } from "../models/index.ts";
import { streamCsv } from "./streamRows.ts";

export interface FilesCsvFilter {
  collection?: number;
  from?: Date;
  to?: Date;
}

const PAGE = 1000;

function countBySeverity(f: FileResult, severity: string): number {
  return f.worstFindings.reduce((n, w) => n + (w.severity === severity ? w.count : 0), 0);
}

export function csvRowOfFileResult(f: FileResult): CsvFileRow {
  return {
    path: f.path,
    collection: f.collection?.name ?? null,
    batchId: f.batchId,
    batchKey: f.batch?.batchKey ?? null,
    profile: f.batch?.profileName ?? "",
    scannedAt: f.batch?.startedAt.toISOString() ?? "",
    verdict: f.verdict,
    reviewState: f.reviewState,
    error: f.error,
    sizeBytes: Number(f.sizeBytes),
    sha256: f.sha256,
    format: f.format,
    metrics: f.metrics,
    failFindings: countBySeverity(f, "fail"),
    warnFindings: countBySeverity(f, "warn"),
    findingCodes: f.findingCodes,
    spectrogram: f.spectrogramKey ? fileImageUrl(f.id, "spectrogram") : null,
    fileResultId: f.id,
  };
}

export async function writeFilesCsv(res: Response, filter: FilesCsvFilter): Promise<void> {
  const batchWhere: Record<string | symbol, unknown> = {};
  if (filter.from || filter.to) {
    batchWhere.startedAt = { ...(filter.from ? { [Op.gte]: filter.from } : {}), ...(filter.to ? { [Op.lte]: filter.to } : {}) };
  }
  const csv = stringify(CSV_STRINGIFY_OPTIONS);
  await streamCsv(
    res,
    csv,
    (afterId) =>
      FileResult.findAll({
        where: { id: { [Op.gt]: afterId }, ...(filter.collection ? { collectionId: filter.collection } : {}) } as WhereOptions<FileResult>,
        attributes: { exclude: ["metadata"] },
        include: [
          { model: Batch, as: "batch", attributes: ["id", "batchKey", "startedAt", "profileName"], where: batchWhere as WhereOptions<Batch>, required: true },
          { model: Collection, as: "collection", attributes: ["id", "name"] },
        ],
        order: [["id", "ASC"]],
        limit: PAGE,
      }),
    (f) => csvRecord(csvRowOfFileResult(f)),
  );
}
