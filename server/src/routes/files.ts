import { Router, type RequestHandler } from "express";
import { z } from "zod";
import { REVIEW_STATES, type FileSummaryDto, type Page } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { toFileSummaryDto, toFileSummaryDtoFromRow } from "../dto.ts";
import { notFound } from "../errors.ts";
import { requirePermission } from "../middleware/auth.ts";
import { loadFileResult } from "../middleware/loadEntity.ts";
import { fileDetail } from "../services/fileDetail.ts";
import { fileQuerySchema, listFiles } from "../services/fileList.ts";
import { createListTotals } from "../services/listTotals.ts";
import { changeReviewState } from "../services/review.ts";
import { ObjectNotFoundError } from "../storage/ObjectStore.ts";
import type { ImageKind } from "../storage/objectKeys.ts";
import { parseWith } from "../validate.ts";

const reviewChange = {
  reviewState: z.enum(REVIEW_STATES),
  reason: z.string().trim().max(2000).default(""),
};
const reviewSchema = z.object(reviewChange).strict();
const bulkReviewSchema = z
  .object({ ids: z.array(z.number().int().min(1).max(2_147_483_647)).min(1).max(1000), ...reviewChange })
  .strict();

export function filesRouter(ctx: AppContext): Router {
  const router = Router();
  const totals = createListTotals(ctx.sequelize);

  router.get("/files", requirePermission("view"), async (req, res) => {
    const query = parseWith(fileQuerySchema, req.query, "query");
    const { rows, total } = await listFiles(ctx.sequelize, query, totals);
    const body: Page<FileSummaryDto> = { items: rows.map(toFileSummaryDtoFromRow), total, page: query.page, pageSize: query.pageSize };
    res.json(body);
  });

  router.post("/files/review", requirePermission("review"), async (req, res) => {
    const { ids, reviewState, reason } = parseWith(bulkReviewSchema, req.body, "bulk review change");
    const { files, changed } = await changeReviewState(ctx, res, ids, reviewState, reason);
    res.json({ items: files.map(toFileSummaryDto), changed });
  });

  router.get("/files/:id", requirePermission("view"), loadFileResult, async (_req, res) => {
    res.json(await fileDetail(res.locals.file!));
  });

  router.patch("/files/:id", requirePermission("review"), loadFileResult, async (req, res) => {
    const { reviewState, reason } = parseWith(reviewSchema, req.body, "review change");
    const { files } = await changeReviewState(ctx, res, [res.locals.file!.id], reviewState, reason);
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
  router.get("/files/:id/spectrogram.png", requirePermission("view"), loadFileResult, image("spectrogram"));
  router.get("/files/:id/waveform.png", requirePermission("view"), loadFileResult, image("waveform"));

  return router;
}
