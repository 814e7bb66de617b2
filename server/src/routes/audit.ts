import { Router } from "express";
import { auditQuerySchema } from "@tidemark/shared/contracts/audit";
import type { AuditEntryDto, Page } from "@tidemark/shared/types/api";
import { toAuditEntryDto } from "../dto.ts";
import { requirePermission } from "../middleware/auth.ts";
import { AuditEntry, User } from "../models/index.ts";
import { auditWhere } from "../services/auditQuery.ts";
import { validate } from "../validate.ts";

const listQuery = validate("query", auditQuerySchema);

export function auditRouter(): Router {
  const router = Router();
  router.get("/audit", requirePermission("export"), listQuery, async (_req, res) => {
    const query = listQuery.of(res);
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
