/** The audit trail: one row per write, with actor, action, target, time and request id. */
import type { Response } from "express";
import type { Transaction } from "sequelize";
import { AuditEntry } from "../models/index.ts";

export interface AuditRecord {
  action: string;
  targetType: string;
  targetId?: string | number | null;
  details?: Record<string, unknown> | null;
  /** Overrides the signed-in actor (e.g. a password reset, where nobody is signed in). */
  actorId?: number | null;
}

export async function recordAudit(res: Response, record: AuditRecord, transaction?: Transaction): Promise<void> {
  await AuditEntry.create(
    {
      actorId: record.actorId !== undefined ? record.actorId : (res.locals.auth?.user.id ?? null),
      action: record.action,
      targetType: record.targetType,
      targetId: record.targetId === undefined || record.targetId === null ? null : String(record.targetId),
      requestId: res.locals.requestId ?? null,
      details: record.details ?? null,
    },
    { transaction },
  );
}
