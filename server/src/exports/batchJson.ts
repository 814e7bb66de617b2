/** GET /api/exports/batches/:id.json: the batch with every file's measurements, findings and review trail. */
import type { BatchDto, CommentDto, FindingDto, ReviewEventDto } from "@tidemark/shared/types/api";
import type { FileMetadata, FileMetrics, AudioFormat, ReportError } from "@tidemark/shared/types/report";
import { toBatchDto, toCommentDto, toFindingDto, toReviewEventDto } from "../dto.ts";
import { Comment, FileResult, Finding, ReviewEvent, User, type Batch } from "../models/index.ts";

export const BATCH_EXPORT_SCHEMA = "tidemark.batch-export/1";

export interface BatchExportFile {
  id: number;
  path: string;
  /** Exact bytes of a path that is not UTF-8, base64; absent otherwise. */
  pathBytes?: string;
  sizeBytes: number;
  sha256: string | null;
  format: AudioFormat | null;
  metadata: FileMetadata;
  metrics: FileMetrics | null;
  error: ReportError | null;
  verdict: string;
  reviewState: string;
  previousFileResultId: number | null;
  findings: FindingDto[];
  reviewEvents: ReviewEventDto[];
  comments: CommentDto[];
}

export interface BatchExport {
  schema: typeof BATCH_EXPORT_SCHEMA;
  exportedAt: string;
  batch: BatchDto;
  files: BatchExportFile[];
}

function groupBy<T>(rows: T[], key: (row: T) => number): Map<number, T[]> {
  const map = new Map<number, T[]>();
  for (const row of rows) {
    const k = key(row);
    const list = map.get(k);
    if (list) list.push(row);
    else map.set(k, [row]);
  }
  return map;
}

export async function batchExport(batch: Batch): Promise<BatchExport> {
  const files = await FileResult.findAll({ where: { batchId: batch.id }, order: [["id", "ASC"]] });
  const ofFiles = { fileResultId: files.map((f) => f.id) };
  const [findings, events, comments] = await Promise.all([
    Finding.findAll({ where: ofFiles, order: [["id", "ASC"]] }),
    ReviewEvent.findAll({ where: ofFiles, include: [{ model: User, as: "actor" }], order: [["id", "ASC"]] }),
    Comment.findAll({ where: ofFiles, include: [{ model: User, as: "author" }], order: [["id", "ASC"]] }),
  ]);
  const findingsBy = groupBy(findings, (f) => f.fileResultId);
  const eventsBy = groupBy(events, (e) => e.fileResultId);
  const commentsBy = groupBy(comments, (c) => c.fileResultId);
  return {
    schema: BATCH_EXPORT_SCHEMA,
    exportedAt: new Date().toISOString(),
    batch: toBatchDto(batch),
    files: files.map((f) => ({
      id: f.id,
      path: f.path,
      ...(f.pathBytes ? { pathBytes: f.pathBytes } : {}),
      sizeBytes: Number(f.sizeBytes),
      sha256: f.sha256,
      format: f.format,
      metadata: f.metadata,
      metrics: f.metrics,
      error: f.error,
      verdict: f.verdict,
      reviewState: f.reviewState,
      previousFileResultId: f.previousId,
      findings: (findingsBy.get(f.id) ?? []).map(toFindingDto),
      reviewEvents: (eventsBy.get(f.id) ?? []).map(toReviewEventDto),
      comments: (commentsBy.get(f.id) ?? []).map(toCommentDto),
    })),
  };
}
