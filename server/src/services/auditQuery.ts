import { Op, Sequelize, type WhereOptions } from "sequelize";
import type { AuditFilters } from "@tidemark/shared/contracts/audit";
import { lowerBound, upperBound } from "@tidemark/shared/contracts/fields";
import { User, type AuditEntry } from "../models/index.ts";

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
  const from = lowerBound(f.from);
  const to = upperBound(f.to);
  if (from || to) where.createdAt = { ...(from ? { [Op.gte]: from } : {}), ...(to ? { [Op.lte]: to } : {}) };
  return where as WhereOptions<AuditEntry>;
}
