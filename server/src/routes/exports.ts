import { Router, type Response } from "express";
import { auditCsvQuerySchema } from "@tidemark/shared/contracts/audit";
import { filesCsvQuerySchema } from "@tidemark/shared/contracts/exports";
import { lowerBound, upperBound } from "@tidemark/shared/contracts/fields";
import type { AppContext } from "../context.ts";
import { writeAuditCsv } from "../exports/auditCsv.ts";
import { batchExport } from "../exports/batchJson.ts";
import { writeBatchPdf } from "../exports/batchPdf.ts";
import { loadThumbnails } from "../exports/batchPdfImages.ts";
import { writeFilesCsv } from "../exports/filesCsv.ts";
import { requirePermission } from "../middleware/auth.ts";
import { loadBatch, loadCollection } from "../middleware/loadEntity.ts";
import { conflict } from "../errors.ts";
import { writeCollectionJson } from "../exports/collectionJson.ts";
import { premisForBatch, premisForCollection } from "../exports/premisData.ts";
import { premisXml, type PremisDocument } from "../exports/premisXml.ts";
import { auditWhere } from "../services/auditQuery.ts";
import { validate } from "../validate.ts";

const filesCsvQuery = validate("query", filesCsvQuerySchema);
const auditCsvQuery = validate("query", auditCsvQuerySchema);
const stamp = (): string => new Date().toISOString().slice(0, 10);

export function exportsRouter(ctx: AppContext): Router {
  const router = Router();
  router.use("/exports", requirePermission("export"));

  router.get("/exports/files.csv", filesCsvQuery, async (_req, res) => {
    const query = filesCsvQuery.of(res);
    const filter = { collection: query.collection, from: lowerBound(query.from), to: upperBound(query.to) };
    res.set({ "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="tidemark-files-${stamp()}.csv"` });
    await writeFilesCsv(res, filter);
  });

  router.get("/exports/audit.csv", auditCsvQuery, async (_req, res) => {
    const where = await auditWhere(auditCsvQuery.of(res));
    res.set({ "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="tidemark-audit-${stamp()}.csv"` });
    await writeAuditCsv(res, where);
  });

  router.get("/exports/batches/:id.json", loadBatch, async (_req, res) => {
    const batch = res.locals.batch!;
    const data = await batchExport(batch);
    res.set("Content-Disposition", `attachment; filename="tidemark-batch-${batch.id}.json"`).json(data);
  });

  router.get("/exports/batches/:id.pdf", loadBatch, async (_req, res) => {
    const batch = res.locals.batch!;
    const data = await batchExport(batch);
    const thumbnails = await loadThumbnails(ctx.store, data, ctx.logger);
    res.set({ "Content-Type": "application/pdf", "Content-Disposition": `attachment; filename="tidemark-batch-${batch.id}.pdf"` });
    writeBatchPdf(data, res, thumbnails);
    ctx.logger.info(`exported batch ${batch.id} as PDF`);
  });

  router.get("/exports/batches/:id.premis.xml", loadBatch, async (_req, res) => {
    const batch = res.locals.batch!;
    sendPremis(res, await premisForBatch(batch), `tidemark-batch-${batch.id}.premis.xml`, `batch ${batch.id}`);
  });

  router.get("/exports/collections/:id.premis.xml", loadCollection, async (_req, res) => {
    const collection = res.locals.collection!;
    sendPremis(res, await premisForCollection(collection), `tidemark-collection-${collection.id}.premis.xml`, `collection "${collection.name}"`);
  });

  router.get("/exports/collections/:id.json", loadCollection, async (_req, res) => {
    const collection = res.locals.collection!;
    res.set({ "Content-Type": "application/json; charset=utf-8", "Content-Disposition": `attachment; filename="tidemark-collection-${collection.id}.json"` });
    await writeCollectionJson(collection, res);
  });

  return router;
}

/** PREMIS needs at least one object: an empty batch or collection has nothing to describe. */
function sendPremis(res: Response, doc: PremisDocument, filename: string, what: string): void {
  if (doc.objects.length === 0) throw conflict(`${what} has no files, so there is nothing to describe in PREMIS`, "nothing_to_export");
  res.set({ "Content-Type": "application/xml; charset=utf-8", "Content-Disposition": `attachment; filename="${filename}"` }).send(premisXml(doc));
}
