import { Router } from "express";
import { z } from "zod";
import type { AuditEntryDto, Page } from "@tidemark/shared/types/api";
import { toAuditEntryDto } from "../dto.ts";
import { requirePermission } from "../middleware/auth.ts";
import { AuditEntry, User } from "../models/index.ts";
import { pageParams } from "../queryParams.ts";
import { auditQueryFilters, auditWhere } from "../services/auditQuery.ts";
import { parseWith } from "../validate.ts";

const auditQuery = z.object({ ...auditQueryFilters, ...pageParams }).strict();

export function auditRouter(): Router {
  const router = Router();
  router.get("/audit", requirePermission("export"), async (req, res) => {
    const query = parseWith(auditQuery, req.query, "query");
    const where = await auditWhere(query);
    const [total, rows] = await Promise.all([
      AuditEntry.count({ where }),
      AuditEntry.findAll({
        where,
        include: [{ model: User, as: "actor" }],
        order: [["id", "DESC"]],
        limit: query.pageSize,
        offset: (query.page - 1) * query.pageSize,
      }),
    ]);
    const body: Page<AuditEntryDto> = { items: rows.map(toAuditEntryDto), total, page: query.page, pageSize: query.pageSize };
    res.json(body);
  });
  return router;
}
