import { Router } from "express";
import { ingestFieldsSchema } from "@tidemark/shared/contracts/ingest";
import type { AppContext } from "../context.ts";
import { HttpError } from "../errors.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission, requireTokenAuth } from "../middleware/auth.ts";
import { reportUpload, uploadedReport } from "../middleware/reportUpload.ts";
import { recordAudit } from "../services/audit.ts";
import { ingestBatch } from "../services/ingest.ts";
import { validate } from "../validate.ts";

const uploadFields = validate("upload", ingestFieldsSchema);

export function ingestRouter(ctx: AppContext): Router {
  const router = Router();

  router.post("/ingest", requireTokenAuth, requirePermission("upload"), reportUpload(ctx, "the report"), uploadFields, async (_req, res) => {
    const upload = res.locals.upload!;
    const fields = uploadFields.of(res);
    const { report, artefacts } = await uploadedReport(upload);
    const result = await ingestBatch(ctx, actorOf(res), {
      uploader: res.locals.auth!.user,
      collectionName: fields.collection,
      batchKey: fields.batchKey,
      report,
      artefacts,
    }).catch(async (e: unknown) => {
      // A refused re-use of a batch key is kept in the trail: someone's files were not stored.
      if (e instanceof HttpError && e.code === "batch_key_conflict") {
        const { batchId, differences } = e.details as { batchId: number; differences: string[] };
        await recordAudit(actorOf(res), { action: "batch.ingest_conflict", targetType: "batch", targetId: batchId, details: { batchKey: fields.batchKey, collection: fields.collection, differences } });
      }
      throw e;
    });
    if (!result.created) {
      await recordAudit(actorOf(res), { action: "batch.ingest_repeat", targetType: "batch", targetId: result.batchId, details: { batchKey: fields.batchKey } });
    }
    res.status(result.created ? 201 : 200).json(result);
  });

  return router;
}
