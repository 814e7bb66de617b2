import { Router } from "express";
import { requirePermission } from "../middleware/auth.ts";
import { Collection } from "../models/index.ts";
import { toCollectionDto } from "../dto.ts";

export function collectionsRouter(): Router {
  const router = Router();
  router.get("/collections", requirePermission("view"), async (_req, res) => {
    const collections = await Collection.findAll({ order: [["name", "ASC"]] });
    res.json(collections.map(toCollectionDto));
  });
  return router;
}
