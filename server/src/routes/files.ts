import { Router, type RequestHandler } from "express";
import { bulkReviewChangeSchema, reviewChangeSchema } from "@tidemark/shared/contracts/files";
import { REASON_REQUIRED_STATES, type FilePage, type ReviewState } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { toFileSummaryDto, toFileSummaryDtoFromRow } from "../dto.ts";
import { badRequest, notFound } from "../errors.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission } from "../middleware/auth.ts";
import { loadFileResult } from "../middleware/loadEntity.ts";
import { fileDetail } from "../services/fileDetail.ts";
import { fileListQuerySchema, listFiles } from "../services/fileList.ts";
import { createListTotals } from "../services/listTotals.ts";
import { changeReviewState } from "../services/review.ts";
import type { StoredCloseup } from "../models/FileResult.ts";
import type { FileResult } from "../models/index.ts";
import { ObjectNotFoundError } from "../storage/ObjectStore.ts";
import { IMAGE_NAMES } from "../fileImageUrls.ts";
import type { ImageKind } from "../storage/objectKeys.ts";
import { validate } from "../validate.ts";
import { sendObject, sendObjectWithRanges } from "./sendObject.ts";

const listQuery = validate("query", fileListQuerySchema);
const reviewChange = validate("body", reviewChangeSchema);
const bulkReviewChange = validate("body", bulkReviewChangeSchema);

/** Flagging or sending back for retransfer says why; accepting (or resetting to pending) need not. */
function requireReason(reviewState: ReviewState, reason: string): void {
  if ((REASON_REQUIRED_STATES as readonly ReviewState[]).includes(reviewState) && reason === "") {
    throw badRequest(`a reason is required to mark a file ${reviewState}`, "reason_required");
  }
}

/** The `:k` close-up of the loaded file, or 404. */
function closeupOf(file: FileResult, raw: unknown): StoredCloseup {
  const k = typeof raw === "string" && /^\d{1,6}$/.test(raw) ? Number(raw) : NaN;
  if (Number.isNaN(k)) throw badRequest(`close-up index must be a non-negative integer, got "${String(raw)}"`, "invalid_id");
  const closeup = (file.closeups ?? []).find((c) => c.index === k);
  if (!closeup) throw notFound(`close-up ${k} of file`, file.id);
  return closeup;
}

export function filesRouter(ctx: AppContext): Router {
  const router = Router();
  const totals = createListTotals(ctx.sequelize, (message) => ctx.logger.error(message));

  router.get("/files", requirePermission("view"), listQuery, async (_req, res) => {
    const query = listQuery.of(res);
    const { rows, total, totalIsEstimate, nextCursor, prevCursor } = await listFiles(ctx.sequelize, query, totals);
    // With a cursor, `page` is the caller's own label for where it is; the server reads from the cursor.
    const body: FilePage = {
      items: rows.map(toFileSummaryDtoFromRow),
      total,
      totalIsEstimate,
      page: query.page,
      pageSize: query.pageSize,
      nextCursor,
      prevCursor,
    };
    res.json(body);
  });

  router.post("/files/review", requirePermission("review"), bulkReviewChange, async (_req, res) => {
    const { ids, reviewState, reason } = bulkReviewChange.of(res);
    requireReason(reviewState, reason);
    const { files, changed } = await changeReviewState(ctx, actorOf(res), ids, reviewState, reason);
    res.json({ items: files.map(toFileSummaryDto), changed });
  });

  router.get("/files/:id", requirePermission("view"), loadFileResult, async (_req, res) => {
    res.json(await fileDetail(res.locals.file!));
  });

  router.patch("/files/:id", requirePermission("review"), loadFileResult, reviewChange, async (_req, res) => {
    const { reviewState, reason } = reviewChange.of(res);
    requireReason(reviewState, reason);
    const { files } = await changeReviewState(ctx, actorOf(res), [res.locals.file!.id], reviewState, reason);
    res.json(await fileDetail(files[0]));
  });

  const image = (kind: ImageKind): RequestHandler => async (_req, res) => {
    const file = res.locals.file!;
    const key = kind === "spectrogram" ? file.spectrogramKey : file.waveformKey;
    if (!key) throw notFound(`${kind} of file`, file.id);
    let stream;
    try {
      stream = await ctx.store.get(key);
    } catch (e) {
      if (e instanceof ObjectNotFoundError) throw notFound(`${kind} of file`, file.id);
      throw e;
    }
    res.set({ "Content-Type": "image/png", "Cache-Control": "private, max-age=86400, immutable" });
    stream.on("error", (e) => {
      ctx.logger.error(`reading ${key}: ${String(e)}`);
      res.destroy(e);
    });
    stream.pipe(res);
  };
  router.get(`/files/:id/${IMAGE_NAMES.spectrogram}`, requirePermission("view"), loadFileResult, image("spectrogram"));
  router.get(`/files/:id/${IMAGE_NAMES.waveform}`, requirePermission("view"), loadFileResult, image("waveform"));

  // Issue #16: close-ups, their excerpts (range requests, so the player can seek), the level grid and loudness curve.
  const closeupImage = (kind: "spectrogram" | "waveform"): RequestHandler => async (req, res) => {
    const file = res.locals.file!;
    const closeup = closeupOf(file, req.params.k);
    const key = kind === "spectrogram" ? closeup.spectrogramKey : closeup.waveformKey;
    await sendObject(ctx, res, { key, contentType: "image/png", what: `close-up ${closeup.index} ${kind} of file`, fileId: file.id });
  };
  router.get(`/files/:id/closeups/:k/${IMAGE_NAMES.spectrogram}`, requirePermission("view"), loadFileResult, closeupImage("spectrogram"));
  router.get(`/files/:id/closeups/:k/${IMAGE_NAMES.waveform}`, requirePermission("view"), loadFileResult, closeupImage("waveform"));
  router.get("/files/:id/closeups/:k/excerpt", requirePermission("view"), loadFileResult, async (req, res) => {
    const file = res.locals.file!;
    const closeup = closeupOf(file, req.params.k);
    const what = `close-up ${closeup.index} excerpt of file`;
    await sendObjectWithRanges(ctx, req, res, { key: closeup.excerptKey, contentType: closeup.excerptMediaType ?? "application/octet-stream", what, fileId: file.id });
  });
  router.get("/files/:id/level-grid", requirePermission("view"), loadFileResult, async (_req, res) => {
    const file = res.locals.file!;
    await sendObject(ctx, res, { key: file.levelGridKey, contentType: "application/json", what: "level grid of file", fileId: file.id });
  });
  router.get("/files/:id/loudness-curve", requirePermission("view"), loadFileResult, async (_req, res) => {
    const file = res.locals.file!;
    await sendObject(ctx, res, { key: file.loudnessCurveKey, contentType: "application/json", what: "loudness curve of file", fileId: file.id });
  });

  return router;
}
