/** Review-state changes, single or bulk: all or nothing, one review event and one audit entry per file. */
import { Op } from "sequelize";
import type { ReviewState } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { HttpError } from "../errors.ts";
import { Collection, FileResult, ReviewEvent } from "../models/index.ts";
import { actingUser, type Actor } from "./actor.ts";
import { recordAudit } from "./audit.ts";

export async function changeReviewState(
  ctx: AppContext,
  actor: Actor,
  ids: number[],
  toState: ReviewState,
  reason: string,
): Promise<{ files: FileResult[]; changed: number }> {
  const user = actingUser(actor);
  const unique = [...new Set(ids)];
  return ctx.sequelize.transaction(async (transaction) => {
    // Row locks: two reviewers changing the same file serialise, and each event's fromState is true.
    const files = await FileResult.findAll({
      where: { id: { [Op.in]: unique } },
      order: [["id", "ASC"]],
      lock: transaction.LOCK.UPDATE,
      transaction,
    });
    if (files.length !== unique.length) {
      const found = new Set(files.map((f) => f.id));
      const missing = unique.filter((id) => !found.has(id));
      throw new HttpError(404, "not_found", `file${missing.length > 1 ? "s" : ""} ${missing.slice(0, 20).join(", ")} not found; nothing was changed`);
    }
    let changed = 0;
    for (const file of files) {
      if (file.reviewState === toState) continue;
      const fromState = file.reviewState;
      await ReviewEvent.create({ fileResultId: file.id, actorId: user.id, fromState, toState, reason }, { transaction });
      await file.update({ reviewState: toState }, { transaction });
      await recordAudit(actor, { action: "file.review", targetType: "file", targetId: file.id, details: { from: fromState, to: toState, reason } }, transaction);
      changed++;
    }
    const withCollections = await FileResult.findAll({
      where: { id: { [Op.in]: unique } },
      include: [{ model: Collection, as: "collection" }],
      order: [["id", "ASC"]],
      transaction,
    });
    return { files: withCollections, changed };
  });
}
