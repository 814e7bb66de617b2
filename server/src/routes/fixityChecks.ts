/** POST /api/fixity-checks: `tidemark verify --upload` sends what it found, in slices of at most 1000 files. */
import { Router } from "express";
import { fixityCheckUploadSchema } from "@tidemark/shared/contracts/fixityChecks";
import type { AppContext } from "../context.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission, requireTokenAuth } from "../middleware/auth.ts";
import { notifyFixityChanged, recordFixityChecks } from "../services/fixityChecks.ts";
import { validate } from "../validate.ts";

const upload = validate("body", fixityCheckUploadSchema);

export function fixityChecksRouter(ctx: AppContext): Router {
  const router = Router();
  router.post("/fixity-checks", requireTokenAuth, requirePermission("upload"), upload, async (_req, res) => {
    const input = upload.of(res);
    const { result, changed, collection } = await recordFixityChecks(ctx, actorOf(res), input);
    await notifyFixityChanged(ctx, collection, changed).catch((e: unknown) => ctx.logger.error(`fixity e-mail for collection ${collection.id}: ${String(e)}`));
    res.status(201).json(result);
  });
  return router;
}
