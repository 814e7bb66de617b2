/** A worker's requests: claim, heartbeat, fail, release, and the text fields of a result upload. */
import { z } from "zod";
import { label } from "./fields.ts";

export const MAX_CLAIM = 16;
/** Longest a claim may wait on the server for a job to arrive (a long poll). */
export const MAX_CLAIM_WAIT_SECONDS = 10;

const workerName = label(200);
const attempt = z.number().int().min(1).max(1_000_000);

/** POST /api/jobs/claim body. */
export const claimJobsSchema = z
  .object({
    /** The worker's name, shown in the portal (e.g. host#pid). */
    worker: workerName,
    /** Jobs wanted, 1–MAX_CLAIM. */
    max: z.number().int().min(1).max(MAX_CLAIM).default(1),
    /** Seconds the server may hold the request open for a job to arrive: a long poll. */
    wait: z.number().min(0).max(MAX_CLAIM_WAIT_SECONDS).default(0),
  })
  .strict()
  .describe("claim");
export type ClaimJobsRequest = z.input<typeof claimJobsSchema>;

/** POST /api/jobs/heartbeat body: the jobs this worker holds. */
export const jobHeartbeatSchema = z
  .object({ worker: workerName, jobs: z.array(z.object({ id: z.number().int().min(1), attempt }).strict()).max(256) })
  .strict()
  .describe("heartbeat");
export type JobHeartbeatRequest = z.input<typeof jobHeartbeatSchema>;

/** POST /api/jobs/:id/fail body. */
export const failJobSchema = z.object({ attempt, worker: workerName, message: z.string().trim().min(1).max(2000) }).strict().describe("failure");
export type FailJobRequest = z.input<typeof failJobSchema>;

/**
 * POST /api/jobs/:id/release body. No retry is spent. `unreachable`: this worker cannot reach the file
 * (storage not mounted); it is not offered the job again, and the job is dead-lettered only when as many
 * distinct workers as the retry limit allows could not reach it either.
 */
export const releaseJobSchema = z
  .object({ attempt, worker: workerName, reason: z.enum(["stopping", "unreachable"]).optional(), message: z.string().trim().min(1).max(2000).optional() })
  .strict()
  .describe("release");
export type ReleaseJobRequest = z.input<typeof releaseJobSchema>;

/** Text fields of POST /api/jobs/:id/result (multipart strings, beside the report and artefact parts). */
export const jobResultFieldsSchema = z.object({ attempt: z.coerce.number().int().min(1).max(1_000_000), worker: workerName }).strict().describe("result fields");
