/** Calls of the distributed-scanning API for server tests: runs, files, claims and results. */
import request from "supertest";
import type { Express } from "express";
import { findBuiltinProfile } from "@tidemark/shared/profiles/builtinProfiles";
import type { ClaimedJobDto, CreateRunRequest, EnqueueFileDto, RunProfileDto } from "@tidemark/shared/types/api";
import { profileHashOf } from "../../../server/src/services/runsValidation.ts";
import { pngBytes, scanReport, type FileSpec } from "./reports.ts";

export function runProfile(name = "access-copy"): RunProfileDto {
  const profile = findBuiltinProfile(name);
  if (!profile) throw new Error(`no built-in profile ${name}`);
  return { name: profile.name, hash: profileHashOf(profile), definition: profile as unknown as Record<string, unknown> };
}

export function runRequest(overrides: Partial<CreateRunRequest> = {}): CreateRunRequest {
  return {
    collection: "Ferry Terminal Interviews 1978",
    name: "night transfers",
    root: "/srv/harbourside/ferry-1978",
    profile: runProfile(),
    tool: { name: "tidemark", version: "0.1.0-test" },
    ...overrides,
  };
}

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

export const createRun = (app: Express, token: string, body: object = runRequest()) => request(app).post("/api/runs").set(bearer(token)).send(body);

export const addFiles = (app: Express, token: string, runId: number, files: EnqueueFileDto[]) =>
  request(app).post(`/api/runs/${runId}/files`).set(bearer(token)).send({ files });

export const claim = (app: Express, token: string, worker: string, max = 1) => request(app).post("/api/jobs/claim").set(bearer(token)).send({ worker, max });

export function fileOf(path: string, sizeBytes = 1000, mtimeMs = 1_764_000_000_000.5): EnqueueFileDto {
  return { path, sizeBytes, mtimeMs };
}

export function postResult(
  app: Express,
  token: string,
  job: Pick<ClaimedJobDto, "id" | "attempt" | "path">,
  options: { worker?: string; spec?: Partial<FileSpec>; images?: boolean; attempt?: number } = {},
): request.Test {
  const report = scanReport([{ path: job.path, ...options.spec }]);
  let req = request(app)
    .post(`/api/jobs/${job.id}/result`)
    .set(bearer(token))
    .field("attempt", String(options.attempt ?? job.attempt))
    .field("worker", options.worker ?? "test-worker")
    .attach("report", Buffer.from(JSON.stringify(report)), { filename: "report.json", contentType: "application/json" });
  if (options.images !== false) {
    req = req.attach("spectrogram", pngBytes(), { filename: "0.png", contentType: "image/png" }).attach("waveform", pngBytes(), { filename: "0.png", contentType: "image/png" });
  }
  return req;
}

let seq = 0;

/** A run with `count` fresh files, every one claimed by `worker`: one job per call for tests that use each once. */
export async function claimedJobs(app: Express, token: string, count = 1, worker = "fixture-worker"): Promise<ClaimedJobDto[]> {
  const run = await createRun(app, token, runRequest({ name: `fixture ${Date.now()}-${++seq}` }));
  if (run.status !== 201) throw new Error(`create run: ${run.status} ${JSON.stringify(run.body)}`);
  const files = Array.from({ length: count }, (_, i) => fileOf(`reel-${seq}/take-${i}.wav`));
  const added = await addFiles(app, token, run.body.run.id, files);
  if (added.status !== 200) throw new Error(`add files: ${added.status} ${JSON.stringify(added.body)}`);
  const jobs: ClaimedJobDto[] = [];
  // Claims take the oldest jobs first, so earlier fixtures left unclaimed would be handed out here.
  while (jobs.length < count) {
    const res = await claim(app, token, worker, 16);
    if (res.status !== 200) throw new Error(`claim: ${res.status} ${JSON.stringify(res.body)}`);
    if (res.body.jobs.length === 0) throw new Error("the queue ran dry before the fixture's jobs were claimed");
    jobs.push(...(res.body.jobs as ClaimedJobDto[]).filter((j) => j.runId === run.body.run.id));
  }
  return jobs;
}

/** Claims until the job with `id` comes round again (other queued jobs claimed meanwhile stay held). */
export async function reclaim(app: Express, token: string, id: number, worker = "fixture-worker"): Promise<ClaimedJobDto> {
  for (let round = 0; round < 50; round++) {
    const res = await claim(app, token, worker, 16);
    const mine = (res.body.jobs as ClaimedJobDto[]).find((j) => j.id === id);
    if (mine) return mine;
    if (res.body.jobs.length === 0) break;
  }
  throw new Error(`job ${id} did not come back to the queue`);
}

/** A job failed until its retries are spent: dead-lettered, ready for a supervisor's retry. */
export async function deadJob(app: Express, token: string): Promise<ClaimedJobDto> {
  let [job] = await claimedJobs(app, token, 1);
  for (let round = 0; round < 20; round++) {
    const res = await request(app).post(`/api/jobs/${job.id}/fail`).set(bearer(token)).send({ attempt: job.attempt, worker: "fixture-worker", message: "fixture failure" });
    if (res.status !== 200) throw new Error(`fail: ${res.status} ${JSON.stringify(res.body)}`);
    if (res.body.state === "failed") return job;
    job = await reclaim(app, token, job.id);
  }
  throw new Error(`job ${job.id} was never dead-lettered`);
}
