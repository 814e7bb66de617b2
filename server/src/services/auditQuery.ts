import { Op, Sequelize, type WhereOptions } from "sequelize";
import { z } from "zod";
import { User, type AuditEntry } from "../models/index.ts";
import { blankToUndefined, optionalDate, optionalDateTo } from "../queryParams.ts";

const text = z.preprocess(blankToUndefined, z.string().trim().max(200).optional());

/** Filters shared by GET /api/audit and the audit CSV export. */
export const auditQueryFilters = {
  /** A user id, or part of an e-mail address. */
  actor: text,
  action: text,
  targetType: text,
  targetId: text,
  from: optionalDate,
  to: optionalDateTo,
};

export interface AuditFilters {
  actor?: string;
  action?: string;
  targetType?: string;
  targetId?: string;
  from?: Date;
  to?: Date;
}

const escapeLike = (s: string): string => s.replace(/[\\%_]/g, (c) => `\\${c}`);

async function actorIds(actor: string): Promise<number[]> {
  if (/^\d{1,9}$/.test(actor)) return [Number(actor)];
  const users = await User.findAll({
    where: Sequelize.where(Sequelize.fn("lower", Sequelize.col("email")), { [Op.like]: `%${escapeLike(actor.toLowerCase())}%` }),
    attributes: ["id"],
  });
  return users.map((u) => u.id);
}

export async function auditWhere(f: AuditFilters): Promise<WhereOptions<AuditEntry>> {
  const where: Record<string | symbol, unknown> = {};
  if (f.actor) where.actorId = { [Op.in]: await actorIds(f.actor) };
  // An action ending in "." is a prefix: "file." matches file.review and file.fixity_changed.
  if (f.action) where.action = f.action.endsWith(".") ? { [Op.like]: `${escapeLike(f.action)}%` } : f.action;
  if (f.targetType) where.targetType = f.targetType;
  if (f.targetId) where.targetId = f.targetId;
  if (f.from || f.to) where.createdAt = { ...(f.from ? { [Op.gte]: f.from } : {}), ...(f.to ? { [Op.lte]: f.to } : {}) };
  return where as WhereOptions<AuditEntry>;
}
