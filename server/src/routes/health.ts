import { Router } from "express";
import type { HealthDto } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";

const PROBE_TIMEOUT_MS = 2_000;

/** Database round trip with a deadline, so a hung connection reads as "down" rather than a hung probe. */
async function databaseIsUp(ctx: AppContext): Promise<boolean> {
  let timer: NodeJS.Timeout | undefined;
  const deadline = new Promise<false>((resolve) => {
    timer = setTimeout(() => resolve(false), PROBE_TIMEOUT_MS);
  });
  const probe = ctx.sequelize.query("select 1").then(
    () => true,
    () => false,
  );
  try {
    return await Promise.race([probe, deadline]);
  } finally {
    clearTimeout(timer);
  }
}

export function healthRouter(ctx: AppContext): Router {
  const router = Router();
  router.get("/health", async (_req, res) => {
    const up = await databaseIsUp(ctx);
    const body: HealthDto = { ok: up, db: up ? "up" : "down" };
    res.status(up ? 200 : 503).set("Cache-Control", "no-store").json(body);
  });
  return router;
}
