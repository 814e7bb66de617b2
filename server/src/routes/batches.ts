import { Router } from "express";
import { Op, type Order, type OrderItem, type WhereOptions } from "sequelize";
import { batchQuerySchema } from "@tidemark/shared/contracts/batches";
import { lowerBound, upperBound } from "@tidemark/shared/contracts/fields";
import type { BatchDto, BatchSortKey, Page } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { toBatchDto } from "../dto.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission } from "../middleware/auth.ts";
import { idParam, loadBatch } from "../middleware/loadEntity.ts";
import { Batch, Collection, User } from "../models/index.ts";
import { deleteBatch } from "../services/batchDelete.ts";
import { batchOverview } from "../services/batchOverview.ts";
import { validate } from "../validate.ts";

const listQuery = validate("query", batchQuerySchema);

function orderFor(sort: BatchSortKey, direction: "ASC" | "DESC"): Order {
  const by: OrderItem =
    sort === "collection" ? [{ model: Collection, as: "collection" }, "name", direction] : [sort, direction];
  return [by, ["id", direction]];
}

/** `q`: a batch number ("42", "#42") matches that batch; any text matches part of the batch key or collection name. */
function searchWhere(q: string): WhereOptions<Batch> {
  const like = `%${q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
  const number = /^#?(\d{1,9})$/.exec(q);
  return {
    [Op.or]: [
      ...(number ? [{ id: Number(number[1]) }] : []),
      { batchKey: { [Op.iLike]: like } },
      { "$collection.name$": { [Op.iLike]: like } },
    ],
  } as WhereOptions<Batch>;
}

export function batchesRouter(ctx: AppContext): Router {
  const router = Router();

  router.get("/batches", requirePermission("view"), listQuery, async (_req, res) => {
    const query = listQuery.of(res);
    const where: WhereOptions<Batch> = {};
    if (query.collection) Object.assign(where, { collectionId: query.collection });
    if (query.q) Object.assign(where, searchWhere(query.q));
    // from/to are when the scan ran (batch startedAt), inclusive.
    const from = lowerBound(query.from);
    const to = upperBound(query.to);
    if (from || to) {
      Object.assign(where, { startedAt: { ...(from ? { [Op.gte]: from } : {}), ...(to ? { [Op.lte]: to } : {}) } });
    }
    const sort = query.sort ?? "createdAt";
    const direction = (query.order ?? (query.sort ? "asc" : "desc")).toUpperCase() as "ASC" | "DESC";
    const [total, rows] = await Promise.all([
      Batch.count({ where, include: [{ model: Collection, as: "collection" }] }),
      Batch.findAll({
        where,
        include: [
          { model: Collection, as: "collection" },
          { model: User, as: "uploader" },
        ],
        order: orderFor(sort, direction),
        limit: query.pageSize,
        offset: (query.page - 1) * query.pageSize,
      }),
    ]);
    const body: Page<BatchDto> = { items: rows.map(toBatchDto), total, page: query.page, pageSize: query.pageSize };
    res.json(body);
  });

  router.get("/batches/:id", requirePermission("view"), loadBatch, (_req, res) => {
    res.json(toBatchDto(res.locals.batch!));
  });

  router.delete("/batches/:id", requirePermission("deleteBatches"), async (req, res) => {
    await deleteBatch(ctx, actorOf(res), idParam(req, "batch"));
    res.status(204).end();
  });

  router.get("/batches/:id/overview", requirePermission("view"), loadBatch, async (_req, res) => {
    res.json(await batchOverview(ctx.sequelize, res.locals.batch!));
  });

  return router;
}
