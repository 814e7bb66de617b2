/**
 * A worker's hold on its jobs, against real PostgreSQL and pg-boss: heartbeats, a silent worker's job
 * taken back (and why, on the run page), fair retries (a file a worker cannot reach spends no retry and is
 * not offered to that worker again; dead-lettered once enough distinct workers could not reach it), a
 * supervisor's requeue of a held job, and job ownership: results, failures, releases and heartbeats only
 * from the token that claimed the job, or an admin (OWASP ASVS 4.0 V4.2.1: access to a resource checked
 * against its owner), each refusal audited.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { CSRF_HEADER, type ClaimedJobDto, type ScanRunDetailDto } from "@tidemark/shared/types/api";
import { AuditEntry, ScanJob, ScanJobAttempt } from "../../server/src/models/index.ts";
import { jobQueueFor } from "../../server/src/queue/jobQueue.ts";
import { requeueSilentJobs } from "../../server/src/queue/reconcile.ts";
import { addFiles, claim, claimedJobs, createRun, fileOf, postResult, runRequest } from "./helpers/runs.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

const HEARTBEAT_SECONDS = 5;

let t: TestApp;
let token: string;
let otherToken: string;
let adminToken: string;
let supervisorAgent: Awaited<ReturnType<TestApp["signIn"]>>["agent"];

const bearer = (tok: string) => ({ Authorization: `Bearer ${tok}` });
const detail = async (runId: number): Promise<ScanRunDetailDto> => (await request(t.app).get(`/api/runs/${runId}`).set(bearer(token))).body;
const release = (tok: string, job: ClaimedJobDto, worker: string, extra: object = {}) =>
  request(t.app).post(`/api/jobs/${job.id}/release`).set(bearer(tok)).send({ attempt: job.attempt, worker, ...extra });

beforeAll(async () => {
  t = await startTestApp({ label: "heartbeats" });
  await t.createUser("supervisor", { email: "night.supervisor@harbourside.test" });
  supervisorAgent = await t.signInAs("night.supervisor@harbourside.test");
  token = await t.tokenFor(await t.createUser("technician"));
  otherToken = await t.tokenFor(await t.createUser("technician"));
  adminToken = await t.tokenFor(await t.createUser("admin"));
  // Two failures, or two distinct workers that cannot reach a file, dead-letter it.
  await jobQueueFor(t.db.sequelize).configure({ expireInSeconds: 600, retryLimit: 1, retentionMinutes: 1440, heartbeatSeconds: HEARTBEAT_SECONDS });
});
afterAll(async () => {
  await t.close();
});

describe("heartbeats", () => {
  it("tells the worker how often to report, keeps a reporting worker's job, and takes back a silent one with the reason", async () => {
    const res = await claim(t.app, token, "w-beat");
    expect(res.body.jobs).toEqual([]);
    // The interval is a quarter of the limit, so one lost request is no loss.
    expect(res.body.heartbeatIntervalSeconds).toBe(HEARTBEAT_SECONDS / 4);

    const [job] = await claimedJobs(t.app, token, 1, "w-beat");
    const beat = await request(t.app).post("/api/jobs/heartbeat").set(bearer(token)).send({ worker: "w-beat", jobs: [{ id: job.id, attempt: job.attempt }] });
    expect(beat.body).toEqual({ held: [job.id], lost: [] });
    // Within the limit nothing happens.
    expect(await requeueSilentJobs(t.db.sequelize, HEARTBEAT_SECONDS)).toEqual({ requeued: 0, failed: 0 });
    // Seen from a little past the limit, the worker has been silent too long.
    const later = new Date(Date.now() + (HEARTBEAT_SECONDS + 1) * 1000);
    expect(await requeueSilentJobs(t.db.sequelize, HEARTBEAT_SECONDS, later)).toEqual({ requeued: 1, failed: 0 });
    const row = (await ScanJob.findByPk(job.id))!;
    expect(row).toMatchObject({ state: "queued", failures: 1, heartbeatAt: null });
    expect(row.lastError).toMatch(/^attempt 1 by w-beat: no heartbeat for \d+ s \(limit 5 s\); the worker stopped or lost the server$/);
    expect((await ScanJobAttempt.findOne({ where: { jobId: job.id, attempt: 1 } }))?.outcome).toBe("expired");
    const run = await detail(job.runId);
    expect(run.returnedJobs.map((j) => [j.id, j.lastError])).toEqual([[job.id, row.lastError]]);
    expect(await AuditEntry.count({ where: { action: "job.heartbeat_lost", targetId: String(job.id) } })).toBe(1);

    // The old worker learns it lost the job; its late result is still the one result stored.
    const late = await request(t.app).post("/api/jobs/heartbeat").set(bearer(token)).send({ worker: "w-beat", jobs: [{ id: job.id, attempt: 1 }] });
    expect(late.body).toEqual({ held: [], lost: [job.id] });
    const again = (await claim(t.app, token, "w-next")).body.jobs as ClaimedJobDto[];
    expect(again.map((j) => [j.id, j.attempt])).toEqual([[job.id, 2]]);
    expect((await postResult(t.app, token, job)).status).toBe(201);
    expect((await postResult(t.app, token, again[0])).status).toBe(200);
    expect(await ScanJob.findByPk(job.id)).toMatchObject({ state: "done" });
  });
});

describe("fair retries", () => {
  it("releases an unreachable file without spending a retry, offers it to other workers only, and dead-letters it after two workers", async () => {
    const [job] = await claimedJobs(t.app, token, 1, "w-blind-1");
    const first = await release(token, job, "w-blind-1", { reason: "unreachable", message: "/mnt/archive/reel.wav: ENOENT" });
    expect(first.body).toEqual({ jobId: job.id, state: "queued", attempts: 1 });
    expect(await ScanJob.findByPk(job.id)).toMatchObject({ failures: 0, unreachableBy: ["w-blind-1"], lastError: "w-blind-1 could not reach the file: /mnt/archive/reel.wav: ENOENT" });
    expect((await ScanJobAttempt.findOne({ where: { jobId: job.id, attempt: 1 } }))?.outcome).toBe("unreachable");
    // Not offered to the worker that cannot reach it, even when it is the only job.
    expect((await claim(t.app, token, "w-blind-1", 4)).body.jobs).toEqual([]);
    const second = ((await claim(t.app, token, "w-blind-2")).body.jobs as ClaimedJobDto[])[0];
    expect([second.id, second.attempt]).toEqual([job.id, 2]);
    const dead = await release(token, second, "w-blind-2", { reason: "unreachable", message: "ENOENT" });
    expect(dead.body.state).toBe("failed");
    const row = (await ScanJob.findByPk(job.id))!;
    expect(row.lastError).toBe("2 workers could not reach the file (w-blind-1, w-blind-2); is the storage mounted on them (tidemark worker --mount)?");
    // A supervisor's retry gives it a clean slate: the first worker may try again.
    expect((await supervisorAgent.post(`/api/jobs/${job.id}/retry`).set(CSRF_HEADER, "1")).status).toBe(200);
    expect(await ScanJob.findByPk(job.id)).toMatchObject({ state: "queued", unreachableBy: [], failures: 0 });
    const third = ((await claim(t.app, token, "w-blind-1")).body.jobs as ClaimedJobDto[])[0];
    expect(third.id).toBe(job.id);
    expect((await postResult(t.app, token, third)).status).toBe(201);
  });

  it("spends a retry for a failure about the file itself, and a plain release spends none", async () => {
    const [job] = await claimedJobs(t.app, token, 1, "w-a");
    // Released five times (a worker stopping): still queued, no failure counted.
    let held = job;
    for (let i = 0; i < 5; i++) {
      expect((await release(token, held, "w-a")).body.state).toBe("queued");
      held = ((await claim(t.app, token, "w-a")).body.jobs as ClaimedJobDto[])[0];
      expect(held.id).toBe(job.id);
    }
    expect((await ScanJob.findByPk(job.id))?.failures).toBe(0);
    const fail = (j: ClaimedJobDto) => request(t.app).post(`/api/jobs/${j.id}/fail`).set(bearer(token)).send({ attempt: j.attempt, worker: "w-a", message: "decode error at 12.5 s" });
    expect((await fail(held)).body.state).toBe("queued");
    held = ((await claim(t.app, token, "w-a")).body.jobs as ClaimedJobDto[])[0];
    expect((await fail(held)).body).toEqual({ jobId: job.id, state: "failed", attempts: 7 });
  });
});

describe("supervisor's requeue", () => {
  it("sends a held job back to the queue without spending a retry; others may not", async () => {
    const [job] = await claimedJobs(t.app, token, 1, "w-stuck");
    const technician = await request(t.app).post(`/api/jobs/${job.id}/requeue`).set(bearer(token));
    expect(technician.status).toBe(403);
    // A retry of a held job points to the requeue instead of only refusing.
    const retry = await supervisorAgent.post(`/api/jobs/${job.id}/retry`).set(CSRF_HEADER, "1");
    expect(retry.status).toBe(409);
    expect(retry.body.error.message).toBe(`job ${job.id} is held by w-stuck; send it back to the queue instead (Back to queue, POST /api/jobs/${job.id}/requeue)`);
    const done = await supervisorAgent.post(`/api/jobs/${job.id}/requeue`).set(CSRF_HEADER, "1");
    expect(done.body).toEqual({ jobId: job.id, state: "queued", attempts: 1 });
    const row = (await ScanJob.findByPk(job.id))!;
    expect(row).toMatchObject({ failures: 0 });
    expect(row.lastError).toMatch(/^attempt 1 by w-stuck sent back to the queue by /);
    expect((await ScanJobAttempt.findOne({ where: { jobId: job.id, attempt: 1 } }))?.outcome).toBe("requeued");
    expect((await supervisorAgent.post(`/api/jobs/${job.id}/requeue`).set(CSRF_HEADER, "1")).status).toBe(409);
    const next = ((await claim(t.app, token, "w-fresh")).body.jobs as ClaimedJobDto[])[0];
    expect((await postResult(t.app, token, next)).status).toBe(201);
    expect(await AuditEntry.count({ where: { action: "job.requeue", targetId: String(job.id) } })).toBe(1);
  });
});

describe("job ownership", () => {
  it("answers 403 to a token that did not claim the job, audits it, and lets an admin through", async () => {
    const [job] = await claimedJobs(t.app, token, 1, "w-owner");
    const forged = await postResult(t.app, otherToken, job);
    expect(forged.status).toBe(403);
    expect(forged.body.error).toMatchObject({ code: "not_job_holder", message: expect.stringContaining(`job ${job.id} was not claimed with this API token`) });
    const failed = await request(t.app).post(`/api/jobs/${job.id}/fail`).set(bearer(otherToken)).send({ attempt: 1, worker: "w-owner", message: "forged" });
    expect(failed.status).toBe(403);
    expect((await release(otherToken, job, "w-owner")).status).toBe(403);
    const beat = await request(t.app).post("/api/jobs/heartbeat").set(bearer(otherToken)).send({ worker: "w-owner", jobs: [{ id: job.id, attempt: 1 }] });
    expect(beat.body).toEqual({ held: [], lost: [job.id] });
    expect(await ScanJob.findByPk(job.id)).toMatchObject({ state: "active", fileResultId: null });
    expect(await AuditEntry.count({ where: { action: "job.forbidden", targetId: String(job.id) } })).toBe(3);
    expect((await postResult(t.app, otherToken, { ...job, id: 999_999 })).status).toBe(404);

    const byAdmin = await postResult(t.app, adminToken, job);
    expect(byAdmin.status).toBe(201);
  });

  it("adds files to a run only for the user who created it, or an admin", async () => {
    const run = (await createRun(t.app, token, runRequest({ name: "owner's run" }))).body.run as { id: number };
    const other = await addFiles(t.app, otherToken, run.id, [fileOf("intruder.wav")]);
    expect(other.status).toBe(403);
    expect(other.body.error.code).toBe("not_run_owner");
    expect(await AuditEntry.count({ where: { action: "run.forbidden", targetId: String(run.id) } })).toBe(1);
    expect((await addFiles(t.app, adminToken, run.id, [fileOf("by-admin.wav")])).status).toBe(200);
    const jobs = (await claim(t.app, token, "w-end", 4)).body.jobs as ClaimedJobDto[];
    for (const j of jobs) expect((await postResult(t.app, token, j)).status).toBe(201);
  });
});

describe("throughput", () => {
  it("shows the whole-run rate for a finished run and the recent rate for a running one", async () => {
    const jobs = await claimedJobs(t.app, token, 2, "w-rate");
    await new Promise((r) => setTimeout(r, 200));
    await postResult(t.app, token, jobs[0]);
    const running = await detail(jobs[0].runId);
    expect(running.throughput.shown).toEqual({ basis: "recent", filesPerMinute: running.throughput.recentFilesPerMinute });
    await postResult(t.app, token, jobs[1]);
    const finished = await detail(jobs[0].runId);
    expect(finished.state).toBe("done");
    expect(finished.throughput.shown).toEqual({ basis: "whole-run", filesPerMinute: finished.throughput.filesPerMinute });
    expect(finished.throughput.filesPerMinute).toBeGreaterThan(0);
  });
});

describe("waiting claims", () => {
  it("holds an idle claim open until a job arrives (a long poll), and answers an empty queue after the wait", async () => {
    const started = Date.now();
    const empty = await request(t.app).post("/api/jobs/claim").set(bearer(token)).send({ worker: "w-wait", max: 1, wait: 1 });
    expect(empty.body.jobs).toEqual([]);
    expect(Date.now() - started).toBeGreaterThanOrEqual(700);

    const run = (await createRun(t.app, token, runRequest({ name: "long poll" }))).body.run as { id: number };
    const waiting = request(t.app).post("/api/jobs/claim").set(bearer(token)).send({ worker: "w-wait", max: 1, wait: 8 }).then((r) => ({ r, at: Date.now() }));
    await new Promise((r) => setTimeout(r, 600));
    const addedAt = Date.now();
    await addFiles(t.app, token, run.id, [fileOf("late-arrival.wav")]);
    const { r, at } = await waiting;
    expect((r.body.jobs as ClaimedJobDto[]).map((j) => j.path)).toEqual(["late-arrival.wav"]);
    // Picked up within a few of the server's 300 ms looks, not at the end of the 8 s wait.
    expect(at - addedAt).toBeLessThan(2_000);
    expect((await postResult(t.app, token, r.body.jobs[0])).status).toBe(201);
    expect((await request(t.app).post("/api/jobs/claim").set(bearer(token)).send({ worker: "w", wait: 11 })).status).toBe(400);
  });

  it("wakes a waiting claim when jobs are committed to the queue, not when their transaction rolls back", async () => {
    const queue = jobQueueFor(t.db.sequelize);
    const run = (await createRun(t.app, token, runRequest({ name: "wake on commit" }))).body.run as { id: number };
    // A rolled-back insert wakes nobody: the wait runs its full length.
    const rolledBack = Date.now();
    const waitingForNothing = queue.waitForJobs(1_500).then(() => Date.now() - rolledBack);
    await t.db.sequelize
      .transaction(async (transaction) => {
        await queue.insert([{ queueJobId: "00000000-0000-4000-8000-00000000abcd", data: { scanJobId: -1, runId: run.id, queueJobId: "00000000-0000-4000-8000-00000000abcd" } }], transaction);
        throw new Error("roll back");
      })
      .catch(() => undefined);
    expect(await waitingForNothing).toBeGreaterThanOrEqual(1_400);
    // A committed one (enqueueing a file) ends a long wait at once.
    const started = Date.now();
    const waiting = queue.waitForJobs(8_000).then(() => Date.now());
    await addFiles(t.app, token, run.id, [fileOf("wake-me.wav")]);
    const committedAt = Date.now();
    expect((await waiting) - started).toBeLessThan(8_000 - 1_000);
    expect(await waiting).toBeLessThanOrEqual(committedAt + 50);
    const [job] = (await claim(t.app, token, "w-wake", 1)).body.jobs as ClaimedJobDto[];
    expect(job.path).toBe("wake-me.wav");
    expect((await postResult(t.app, token, job)).status).toBe(201);
  });
});
