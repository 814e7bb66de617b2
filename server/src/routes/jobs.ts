/**
 * The worker's endpoints (API token only): claim jobs, report heartbeats, send one file's result
 * (multipart: the one-file report plus its artefact parts, as ingest takes them), fail or release an
 * attempt; each only from the token that claimed the job, or an admin. Supervisors and admins send a held
 * job back to the queue and retry dead-lettered jobs.
 */
import { Router } from "express";
import { claimJobsSchema, failJobSchema, jobHeartbeatSchema, jobResultFieldsSchema, releaseJobSchema } from "@tidemark/shared/contracts/jobs";
import type { ClaimJobsResultDto, JobHeartbeatResultDto } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission, requireTokenAuth } from "../middleware/auth.ts";
import { idParam } from "../middleware/loadEntity.ts";
import { reportUpload, uploadedReport } from "../middleware/reportUpload.ts";
import { recordAudit } from "../services/audit.ts";
import { assertJobHolder, claimJobs, failJob, heartbeatJobs, releaseJob, releaseUndelivered, requeueJob, retryJob, waitForQueuedJobs } from "../services/runsJobs.ts";
import { storeJobResult } from "../services/runsResults.ts";
import { validate } from "../validate.ts";

/**
 * How often a waiting claim looks at the queue again: the most an idle worker waits for a job queued
 * through another server process (one queued here wakes the claim at once).
 */
const CLAIM_WAIT_STEP_MS = 300;

const claim = validate("body", claimJobsSchema);
const heartbeat = validate("body", jobHeartbeatSchema);
const resultFields = validate("upload", jobResultFieldsSchema);
const failure = validate("body", failJobSchema);
const release = validate("body", releaseJobSchema);

export function jobsRouter(ctx: AppContext): Router {
  const router = Router();

  router.post("/jobs/claim", requireTokenAuth, requirePermission("upload"), claim, async (req, res) => {
    const input = claim.of(res);
    // A long poll: with `wait`, an empty queue is looked at again every few hundred ms until a job comes,
    // the wait ends, the worker hangs up, or the server starts shutting down (it stops listening).
    let hungUp = false;
    res.on("close", () => {
      hungUp = !res.writableEnded;
    });
    const listener = (req.socket as { server?: { listening?: boolean } }).server;
    const deadline = Date.now() + input.wait * 1000;
    const stopWaiting = (): boolean => hungUp || listener?.listening === false;
    let body: ClaimJobsResultDto = await claimJobs(ctx, actorOf(res), input.worker, input.max);
    for (;;) {
      if (hungUp && body.jobs.length > 0) return void (await releaseUndelivered(ctx, body.jobs));
      if (body.jobs.length > 0 || stopWaiting() || Date.now() + CLAIM_WAIT_STEP_MS > deadline) return void res.json(body);
      await waitForQueuedJobs(ctx, CLAIM_WAIT_STEP_MS);
      // Looked at again before touching the database: a shutdown may have closed it meanwhile.
      if (stopWaiting()) return void res.json(body);
      body = await claimJobs(ctx, actorOf(res), input.worker, input.max);
    }
  });

  router.post("/jobs/heartbeat", requireTokenAuth, requirePermission("upload"), heartbeat, async (_req, res) => {
    const input = heartbeat.of(res);
    const body: JobHeartbeatResultDto = await heartbeatJobs(ctx, actorOf(res), input.jobs);
    res.json(body);
  });

  router.post("/jobs/:id/result", requireTokenAuth, requirePermission("upload"), reportUpload(ctx, "the result (a one-file report)"), resultFields, async (req, res) => {
    const id = idParam(req, "job");
    await assertJobHolder(actorOf(res), id, "send a result for");
    const upload = res.locals.upload!;
    const fields = resultFields.of(res);
    const { report, artefacts } = await uploadedReport(upload);
    const result = await storeJobResult(ctx, actorOf(res), id, { report, artefacts, worker: fields.worker, attempt: fields.attempt });
    if (!result.created) {
      await recordAudit(actorOf(res), { action: "job.result_repeat", targetType: "job", targetId: id, details: { worker: fields.worker, attempt: fields.attempt, fileResultId: result.fileResultId } });
    }
    res.status(result.created ? 201 : 200).json(result);
  });

  router.post("/jobs/:id/fail", requireTokenAuth, requirePermission("upload"), failure, async (req, res) => {
    const id = idParam(req, "job");
    res.json(await failJob(ctx, actorOf(res), id, failure.of(res)));
  });

  router.post("/jobs/:id/release", requireTokenAuth, requirePermission("upload"), release, async (req, res) => {
    const id = idParam(req, "job");
    res.json(await releaseJob(ctx, actorOf(res), id, release.of(res)));
  });

  /** A supervisor sends a job a worker holds (stuck, or its worker gone) back to the queue. */
  router.post("/jobs/:id/requeue", requirePermission("review"), async (req, res) => {
    res.json(await requeueJob(ctx, actorOf(res), idParam(req, "job")));
  });

  router.post("/jobs/:id/retry", requirePermission("review"), async (req, res) => {
    res.json(await retryJob(ctx, actorOf(res), idParam(req, "job")));
  });

  return router;
}
