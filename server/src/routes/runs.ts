/**
 * Runs of distributed scanning. The CLI (API token) creates a run and adds its files; everyone who may
 * view batches sees runs, their progress and their dead-lettered jobs; supervisors and admins retry them.
 */
import { Router } from "express";
import { createRunSchema, jobQuerySchema, runQuerySchema } from "@tidemark/shared/contracts/runs";
import type { CreateRunResultDto, RetryRunResultDto } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission, requireTokenAuth } from "../middleware/auth.ts";
import { idParam } from "../middleware/loadEntity.ts";
import { assertRunOwner, createOrFindRun, enqueueFiles, listRunJobs, listRuns, runDetail } from "../services/runs.ts";
import { retryRun } from "../services/runsJobs.ts";
import { enqueueFilesBody } from "../services/runsValidation.ts";
import { validate } from "../validate.ts";

const newRun = validate("body", createRunSchema);
const newFiles = validate("body", enqueueFilesBody);
const runQuery = validate("query", runQuerySchema);
const jobQuery = validate("query", jobQuerySchema);

export function runsRouter(ctx: AppContext): Router {
  const router = Router();

  router.post("/runs", requireTokenAuth, requirePermission("upload"), newRun, async (_req, res) => {
    const input = newRun.of(res);
    const result: CreateRunResultDto = await createOrFindRun(ctx, actorOf(res), input);
    res.status(result.created ? 201 : 200).json(result);
  });

  router.post("/runs/:id/files", requireTokenAuth, requirePermission("upload"), newFiles, async (req, res) => {
    const id = idParam(req, "run");
    const input = newFiles.of(res);
    await assertRunOwner(actorOf(res), id);
    res.json(await enqueueFiles(ctx, actorOf(res), id, input.files));
  });

  router.get("/runs", requirePermission("view"), runQuery, async (_req, res) => {
    res.json(await listRuns(ctx, runQuery.of(res)));
  });

  router.get("/runs/:id", requirePermission("view"), async (req, res) => {
    res.json(await runDetail(ctx, idParam(req, "run")));
  });

  router.get("/runs/:id/jobs", requirePermission("view"), jobQuery, async (req, res) => {
    const id = idParam(req, "run");
    res.json(await listRunJobs(id, jobQuery.of(res)));
  });

  router.post("/runs/:id/retry", requirePermission("review"), async (req, res) => {
    const body: RetryRunResultDto = { retried: await retryRun(ctx, actorOf(res), idParam(req, "run")) };
    res.json(body);
  });

  return router;
}
