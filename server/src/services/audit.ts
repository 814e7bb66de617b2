/** The audit trail: one row per write, with actor, action, target, time and request id. */
import type { Transaction } from "sequelize";
import { AuditEntry } from "../models/index.ts";
import type { Actor } from "./actor.ts";

export interface AuditRecord {
  action: string;
  targetType: string;
  targetId?: string | number | null;
  details?: Record<string, unknown> | null;
  /** Overrides the signed-in actor (e.g. a password reset, where nobody is signed in). */
  actorId?: number | null;
}

export async function recordAudit(actor: Actor, record: AuditRecord, transaction?: Transaction): Promise<void> {
  await AuditEntry.create(
    {
      actorId: record.actorId !== undefined ? record.actorId : (actor.user?.id ?? null),
      action: record.action,
      targetType: record.targetType,
      targetId: record.targetId === undefined || record.targetId === null ? null : String(record.targetId),
      requestId: actor.requestId,
      details: record.details ?? null,
    },
    { transaction },
  );
}
