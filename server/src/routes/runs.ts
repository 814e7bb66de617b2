/**
 * Runs of distributed scanning. The CLI (API token) creates a run and adds its files; everyone who may
 * view batches sees runs, their progress and their dead-lettered jobs; supervisors and admins retry them.
 */
import { Router } from "express";
import { z } from "zod";
import { SCAN_JOB_STATES, type CreateRunResultDto, type RetryRunResultDto } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission, requireTokenAuth } from "../middleware/auth.ts";
import { idParam } from "../middleware/loadEntity.ts";
import { optionalEnum, optionalId, pageParams } from "../queryParams.ts";
import { assertRunOwner, createOrFindRun, enqueueFiles, listRunJobs, listRuns, runDetail } from "../services/runs.ts";
import { retryRun } from "../services/runsJobs.ts";
import { createRunSchema, enqueueFilesSchema } from "../services/runsValidation.ts";
import { parseWith } from "../validate.ts";

const runQuery = z.object({ collection: optionalId, ...pageParams }).strict();
const jobQuery = z.object({ state: optionalEnum(SCAN_JOB_STATES), ...pageParams }).strict();

export function runsRouter(ctx: AppContext): Router {
  const router = Router();

  router.post("/runs", requireTokenAuth, requirePermission("upload"), async (req, res) => {
    const input = parseWith(createRunSchema, req.body ?? {}, "run");
    const result: CreateRunResultDto = await createOrFindRun(ctx, actorOf(res), input);
    res.status(result.created ? 201 : 200).json(result);
  });

  router.post("/runs/:id/files", requireTokenAuth, requirePermission("upload"), async (req, res) => {
    const id = idParam(req, "run");
    const input = parseWith(enqueueFilesSchema, req.body ?? {}, "files");
    await assertRunOwner(actorOf(res), id);
    res.json(await enqueueFiles(ctx, actorOf(res), id, input.files));
  });

  router.get("/runs", requirePermission("view"), async (req, res) => {
    res.json(await listRuns(ctx, parseWith(runQuery, req.query, "query")));
  });

  router.get("/runs/:id", requirePermission("view"), async (req, res) => {
    res.json(await runDetail(ctx, idParam(req, "run")));
  });

  router.get("/runs/:id/jobs", requirePermission("view"), async (req, res) => {
    const id = idParam(req, "run");
    res.json(await listRunJobs(id, parseWith(jobQuery, req.query, "query")));
  });

  router.post("/runs/:id/retry", requirePermission("review"), async (req, res) => {
    const body: RetryRunResultDto = { retried: await retryRun(ctx, actorOf(res), idParam(req, "run")) };
    res.json(body);
  });

  return router;
}
