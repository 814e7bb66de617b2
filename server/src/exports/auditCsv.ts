/** GET /api/exports/audit.csv: the audit trail, oldest first, streamed. */
import type { Response } from "express";
import { stringify } from "csv-stringify";
import { Op, type WhereOptions } from "sequelize";
import { guardCsvText as safeText } from "@tidemark/shared/report/csvReport";
import { AuditEntry, User } from "../models/index.ts";
import { streamCsv } from "./streamRows.ts";

export const AUDIT_CSV_COLUMNS = ["id", "created_at", "actor_id", "actor_email", "action", "target_type", "target_id", "request_id", "details"] as const;

export async function writeAuditCsv(res: Response, where: WhereOptions<AuditEntry>): Promise<void> {
  const csv = stringify({ header: true, columns: [...AUDIT_CSV_COLUMNS], record_delimiter: "windows" });
  await streamCsv(
    res,
    csv,
    (afterId) =>
      AuditEntry.findAll({
        where: { [Op.and]: [where, { id: { [Op.gt]: afterId } }] },
        include: [{ model: User, as: "actor", attributes: ["id", "email"] }],
        order: [["id", "ASC"]],
        limit: 1000,
      }),
    (a) => ({
      id: a.id,
      created_at: a.createdAt.toISOString(),
      actor_id: a.actorId ?? "",
      actor_email: safeText(a.actor?.email),
      action: a.action,
      target_type: a.targetType,
      target_id: safeText(a.targetId),
      request_id: safeText(a.requestId),
      details: a.details ? safeText(JSON.stringify(a.details)) : "",
    }),
  );
}
