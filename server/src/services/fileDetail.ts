/** Everything the file page shows: findings, comments, review history, fixity history and fixity checks. */
import type { FileDetailDto, FixityEntryDto } from "@tidemark/shared/types/api";
import { toFileDetailDto } from "../dto.ts";
import { ApiToken, Batch, Comment, FileResult, Finding, FixityCheck, ReviewEvent, User } from "../models/index.ts";

const HISTORY_LIMIT = 500;

/** Every scan of the same path in the same collection, oldest first, marking where the SHA-256 changed. */
export async function fixityHistory(file: FileResult): Promise<FixityEntryDto[]> {
  const scans = await FileResult.findAll({
    where: { collectionId: file.collectionId, path: file.path },
    attributes: ["id", "batchId", "sha256", "createdAt"],
    include: [{ model: Batch, as: "batch", attributes: ["id", "startedAt"] }],
    order: [["id", "ASC"]],
    limit: HISTORY_LIMIT,
  });
  let lastKnown: string | null = null;
  return scans.map((scan) => {
    const changed = scan.sha256 !== null && lastKnown !== null && scan.sha256 !== lastKnown;
    if (scan.sha256 !== null) lastKnown = scan.sha256;
    return {
      fileResultId: scan.id,
      batchId: scan.batchId,
      sha256: scan.sha256,
      scannedAt: (scan.batch?.startedAt ?? scan.createdAt).toISOString(),
      changed,
    };
  });
}

export async function fileDetail(file: FileResult): Promise<FileDetailDto> {
  const [findings, comments, reviewEvents, history, checks, batch] = await Promise.all([
    Finding.findAll({ where: { fileResultId: file.id }, order: [["id", "ASC"]] }),
    Comment.findAll({ where: { fileResultId: file.id }, include: [{ model: User, as: "author" }], order: [["createdAt", "ASC"], ["id", "ASC"]] }),
    ReviewEvent.findAll({ where: { fileResultId: file.id }, include: [{ model: User, as: "actor" }], order: [["createdAt", "ASC"], ["id", "ASC"]] }),
    fixityHistory(file),
    FixityCheck.findAll({
      where: { collectionId: file.collectionId, path: file.path },
      include: [
        { model: User, as: "user" },
        { model: ApiToken, as: "token", attributes: ["id", "name"] },
      ],
      order: [["id", "ASC"]],
      limit: HISTORY_LIMIT,
    }),
    Batch.findByPk(file.batchId, { attributes: ["id", "profileLimits"] }),
  ]);
  return toFileDetailDto(file, { findings, comments, reviewEvents, fixityHistory: history, fixityChecks: checks, profileLimits: batch?.profileLimits ?? null });
}
