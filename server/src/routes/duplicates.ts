/**
 * Duplicate transfers (issue #11): the links of one file for its page, and a fingerprint lookup for
 * `tidemark match --server`. The lookup reads only, but is token-only like ingest: it is the CLI's door,
 * and its body (up to a few MB of fingerprint) is parsed only once the caller is known.
 */
import express, { Router } from "express";
import { fingerprintLookupQuerySchema } from "@tidemark/shared/contracts/duplicates";
import { MAX_FINGERPRINT_CHARS } from "@tidemark/shared/types/report";
import type { AppContext } from "../context.ts";
import { requirePermission, requireTokenAuth } from "../middleware/auth.ts";
import { loadFileResult } from "../middleware/loadEntity.ts";
import { duplicatesOf, lookupEncodedFingerprint } from "../services/duplicates.ts";
import { validate } from "../validate.ts";

const lookupQuery = validate("query", fingerprintLookupQuerySchema);

export function duplicatesRouter(ctx: AppContext): Router {
  const router = Router();

  router.get("/files/:id/duplicates", requirePermission("view"), loadFileResult, async (_req, res) => {
    res.json(await duplicatesOf(ctx.sequelize, res.locals.file!.id));
  });

  router.post(
    "/duplicates/lookup",
    requireTokenAuth,
    requirePermission("view"),
    express.text({ type: "text/plain", limit: MAX_FINGERPRINT_CHARS + 1024 }),
    lookupQuery,
    async (req, res) => {
      const { limit } = lookupQuery.of(res);
      res.json(await lookupEncodedFingerprint(ctx.sequelize, req.body, limit));
    },
  );

  return router;
}
