import { Router } from "express";
import { z } from "zod";
import type { AppContext } from "../context.ts";
import { writeAuditCsv } from "../exports/auditCsv.ts";
import { batchExport } from "../exports/batchJson.ts";
import { writeBatchPdf } from "../exports/batchPdf.ts";
import { writeFilesCsv } from "../exports/filesCsv.ts";
import { requirePermission } from "../middleware/auth.ts";
import { loadBatch } from "../middleware/loadEntity.ts";
import { optionalDate, optionalDateTo, optionalId } from "../queryParams.ts";
import { auditQueryFilters, auditWhere } from "../services/auditQuery.ts";
import { parseWith } from "../validate.ts";

const filesCsvQuery = z.object({ collection: optionalId, from: optionalDate, to: optionalDateTo }).strict();
const stamp = (): string => new Date().toISOString().slice(0, 10);

export function exportsRouter(ctx: AppContext): Router {
  const router = Router();
  router.use("/exports", requirePermission("export"));

  router.get("/exports/files.csv", async (req, res) => {
    const filter = parseWith(filesCsvQuery, req.query, "query");
    res.set({ "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="tidemark-files-${stamp()}.csv"` });
    await writeFilesCsv(res, filter);
  });

  router.get("/exports/audit.csv", async (req, res) => {
    const filters = parseWith(z.object(auditQueryFilters).strict(), req.query, "query");
    const where = await auditWhere(filters);
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
    res.set({ "Content-Type": "application/pdf", "Content-Disposition": `attachment; filename="tidemark-batch-${batch.id}.pdf"` });
    writeBatchPdf(data, res);
    ctx.logger.info(`exported batch ${batch.id} as PDF`);
  });

  return router;
}
