/** POST /api/fixity-checks: `tidemark verify --upload` sends what it found, in slices of at most 1000 files. */
import { Router } from "express";
import { z } from "zod";
import { FIXITY_OUTCOMES } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission, requireTokenAuth } from "../middleware/auth.ts";
import { notifyFixityChanged, recordFixityChecks } from "../services/fixityChecks.ts";
import { parseWith } from "../validate.ts";

const sha256 = z.string().regex(/^[0-9a-f]{64}$/).nullable();

export const MAX_CHECKS_PER_REQUEST = 1000;

const uploadSchema = z
  .object({
    collection: z.string().trim().min(1).max(200),
    checkedAt: z.iso.datetime(),
    checks: z
      .array(
        z
          .object({
            path: z.string().min(1).max(4096),
            outcome: z.enum(FIXITY_OUTCOMES),
            expectedSha256: sha256,
            actualSha256: sha256,
            movedTo: z.string().min(1).max(4096).nullable(),
            detail: z.string().max(2000),
          })
          .strict(),
      )
      .min(1)
      .max(MAX_CHECKS_PER_REQUEST),
  })
  .strict();

export function fixityChecksRouter(ctx: AppContext): Router {
  const router = Router();
  router.post("/fixity-checks", requireTokenAuth, requirePermission("upload"), async (req, res) => {
    const input = parseWith(uploadSchema, req.body, "fixity checks");
    const { result, changed, collection } = await recordFixityChecks(ctx, actorOf(res), input);
    await notifyFixityChanged(ctx, collection, changed).catch((e: unknown) => ctx.logger.error(`fixity e-mail for collection ${collection.id}: ${String(e)}`));
    res.status(201).json(result);
  });
  return router;
}
