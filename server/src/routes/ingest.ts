import { mkdirSync } from "node:fs";
import { rm } from "node:fs/promises";
import { Router, type RequestHandler } from "express";
import multer from "multer";
import type { AppContext } from "../context.ts";
import { HttpError } from "../errors.ts";
import { requirePermission, requireTokenAuth } from "../middleware/auth.ts";
import { recordAudit } from "../services/audit.ts";
import { ingestBatch } from "../services/ingest.ts";
import { ingestFieldsSchema, largestPartBytes, PART_KIND_NAMES, readArtefactParts, readReport, type UploadedPart } from "../services/ingestValidation.ts";
import { parseWith } from "../validate.ts";

type PartsByField = Record<string, Express.Multer.File[]>;

function multipartUpload(ctx: AppContext): RequestHandler {
  const { upload, uploadTmpDir } = ctx.settings;
  mkdirSync(uploadTmpDir, { recursive: true });
  return multer({
    // Parts go to disk, not memory: a batch can carry thousands of PNGs and excerpts.
    storage: multer.diskStorage({ destination: uploadTmpDir }),
    limits: {
      // The per-kind caps are checked after parsing (ingestValidation.ts, PART_KINDS).
      fileSize: largestPartBytes(upload),
      files: upload.maxImages + 1,
      fields: 10,
      fieldSize: 4096,
      fieldNameSize: 100,
      parts: upload.maxImages + 11,
      headerPairs: 100,
    },
  }).fields([
    { name: "report", maxCount: 1 },
    ...PART_KIND_NAMES.map((name) => ({ name, maxCount: upload.maxImages })),
  ]);
}

const requireMultipart: RequestHandler = (req, _res, next) => {
  if (!req.is("multipart/form-data")) {
    throw new HttpError(415, "unsupported_media_type", "send the report as multipart/form-data (part \"report\" plus optional artefact parts)");
  }
  next();
};

export function ingestRouter(ctx: AppContext): Router {
  const router = Router();

  router.post("/ingest", requireTokenAuth, requirePermission("upload"), requireMultipart, multipartUpload(ctx), async (req, res) => {
    const parts = (req.files ?? {}) as PartsByField;
    const all: UploadedPart[] = Object.values(parts).flat();
    try {
      const fields = parseWith(ingestFieldsSchema, req.body ?? {}, "upload fields");
      const report = await readReport(parts.report?.[0], ctx.settings.upload);
      const artefacts = await readArtefactParts(PART_KIND_NAMES.flatMap((kind) => parts[kind] ?? []), report, ctx.settings.upload);
      const result = await ingestBatch(ctx, res, {
        uploader: res.locals.auth!.user,
        collectionName: fields.collection,
        batchKey: fields.batchKey,
        report,
        artefacts,
      });
      if (!result.created) {
        await recordAudit(res, { action: "batch.ingest_repeat", targetType: "batch", targetId: result.batchId, details: { batchKey: fields.batchKey } });
      }
      res.status(result.created ? 201 : 200).json(result);
    } finally {
      await Promise.all(all.map((p) => rm(p.path, { force: true })));
    }
  });

  return router;
}
