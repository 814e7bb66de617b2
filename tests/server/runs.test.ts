/**
 * Runs and their jobs against real PostgreSQL and pg-boss: enqueue and re-enqueue, claims, results that
 * are stored once however often they arrive, failures into the dead-letter queue and a supervisor's
 * retry, release, the visibility timeout, progress counts, and bad input answered in the one error shape.
 */
import { QueryTypes } from "sequelize";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { CSRF_HEADER, type ClaimedJobDto, type ScanRunDetailDto, type ScanRunDto } from "@tidemark/shared/types/api";
import { AuditEntry, Batch, FileResult, ScanJob, ScanJobAttempt } from "../../server/src/models/index.ts";
import { jobQueueFor } from "../../server/src/queue/jobQueue.ts";
import { DEAD_LETTER_QUEUE } from "../../server/src/queue/queueNames.ts";
import { markDeadLettered } from "../../server/src/queue/reconcile.ts";
import { startQueueSupervisor, type QueueSupervisor } from "../../server/src/queue/supervisor.ts";
import { readMailbox } from "./helpers/mailbox.ts";
import { finding, ingest, scanReport, sha } from "./helpers/reports.ts";
import { addFiles, claim, claimedJobs, createRun, fileOf, postResult, runRequest } from "./helpers/runs.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

const EXPIRE_SECONDS = 2;

let t: TestApp;
let supervisor: QueueSupervisor;
let token: string;
let supervisorAgent: Awaited<ReturnType<TestApp["signIn"]>>["agent"];

beforeAll(async () => {
  t = await startTestApp({ label: "runs" });
  await t.createUser("supervisor", { email: "harbour.supervisor@harbourside.test" });
  supervisorAgent = await t.signInAs("harbour.supervisor@harbourside.test");
  token = await t.tokenFor(await t.createUser("technician"));
  supervisor = await startQueueSupervisor({
    connectionString: t.testDb.url,
    sequelize: t.db.sequelize,
    config: { expireInSeconds: EXPIRE_SECONDS, retryLimit: 1, heartbeatSeconds: 60, retentionMinutes: 1440, maintenanceIntervalSeconds: 1 },
    logger: t.logger,
  });
});
afterAll(async () => {
  await supervisor.stop();
  await t.close();
});

async function until<T>(what: string, probe: () => Promise<T | null | undefined | false>, timeoutMs = 15_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe();
    if (value) return value;
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

const detail = async (runId: number): Promise<ScanRunDetailDto> => (await request(t.app).get(`/api/runs/${runId}`).set("Authorization", `Bearer ${token}`)).body;
const queueState = (job: ClaimedJobDto) => ScanJob.findByPk(job.id).then((j) => jobQueueFor(t.db.sequelize).state(j!.queueJobId));

describe("runs and enqueue", () => {
  it("creates a run with its batch once, finds it again, and refuses another root or profile under its name", async () => {
    const body = runRequest({ name: "reel room A" });
    const first = await createRun(t.app, token, body);
    expect(first.status).toBe(201);
    expect(first.body.created).toBe(true);
    const run: ScanRunDto = first.body.run;
    expect(run).toMatchObject({ name: "reel room A", root: body.root, profileName: "access-copy", state: "waiting", counts: { total: 0 } });
    const batch = await Batch.findByPk(run.batchId);
    expect(batch?.batchKey).toBe(`run ${run.id}: reel room A`);
    expect(batch?.fileCount).toBe(0);

    const again = await createRun(t.app, token, body);
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ created: false, run: { id: run.id, batchId: run.batchId } });

    const otherRoot = await createRun(t.app, token, { ...body, root: "/srv/elsewhere" });
    expect(otherRoot.status).toBe(409);
    expect(otherRoot.body.error).toMatchObject({ code: "run_mismatch", message: expect.stringContaining("/srv/elsewhere") });
    const otherProfile = await createRun(t.app, token, runRequest({ name: "reel room A", profile: (await import("./helpers/runs.ts")).runProfile("preservation-master") }));
    expect(otherProfile.status).toBe(409);
  });

  it("queues each file once, and on re-enqueue skips done and waiting files, reports changed ones and requeues dead-lettered ones", async () => {
    const run = (await createRun(t.app, token, runRequest({ name: "re-enqueue" }))).body.run as ScanRunDto;
    const files = ["a.wav", "b.wav", "c.wav", "d.wav"].map((p) => fileOf(`reels/${p}`));
    const added = await addFiles(t.app, token, run.id, files);
    expect(added.status).toBe(200);
    expect(added.body).toEqual({ added: 4, requeued: 0, alreadyDone: 0, pending: 0, changed: [] });

    // a: done; b: dead-lettered (two failed attempts with a retry limit of 1); c, d: still queued.
    const jobs: ClaimedJobDto[] = (await claim(t.app, token, "w-enqueue", 2)).body.jobs;
    expect(jobs.map((j) => j.path)).toEqual(["reels/a.wav", "reels/b.wav"]);
    expect((await postResult(t.app, token, jobs[0])).status).toBe(201);
    const fail1 = await request(t.app).post(`/api/jobs/${jobs[1].id}/fail`).set("Authorization", `Bearer ${token}`).send({ attempt: 1, worker: "w-enqueue", message: "storage read error" });
    expect(fail1.body).toEqual({ jobId: jobs[1].id, state: "queued", attempts: 1 });
    const retried: ClaimedJobDto[] = (await claim(t.app, token, "w-enqueue", 1)).body.jobs;
    expect(retried.map((j) => [j.id, j.attempt])).toEqual([[jobs[1].id, 2]]);
    const fail2 = await request(t.app).post(`/api/jobs/${jobs[1].id}/fail`).set("Authorization", `Bearer ${token}`).send({ attempt: 2, worker: "w-enqueue", message: "storage read error again" });
    expect(fail2.body).toEqual({ jobId: jobs[1].id, state: "failed", attempts: 2 });

    const changedA = { ...files[0], mtimeMs: files[0].mtimeMs + 1 };
    const again = await addFiles(t.app, token, run.id, [files[0], files[1], files[2], fileOf("reels/e.wav")]);
    expect(again.body).toEqual({ added: 1, requeued: 1, alreadyDone: 1, pending: 1, changed: [] });
    const changed = await addFiles(t.app, token, run.id, [changedA]);
    expect(changed.body).toEqual({ added: 0, requeued: 0, alreadyDone: 0, pending: 0, changed: ["reels/a.wav"] });

    expect((await ScanJob.count({ where: { runId: run.id } }))).toBe(5);
    const counts = (await detail(run.id)).counts;
    expect(counts).toMatchObject({ total: 5, done: 1, queued: 4, active: 0, failed: 0 });
    // Drain what this test queued so later claims start from an empty queue.
    const rest: ClaimedJobDto[] = (await claim(t.app, token, "w-enqueue", 16)).body.jobs;
    expect(rest.map((j) => j.path).sort()).toEqual(["reels/b.wav", "reels/c.wav", "reels/d.wav", "reels/e.wav"]);
    for (const job of rest) expect((await postResult(t.app, token, job)).status).toBe(201);
    expect((await detail(run.id)).state).toBe("done");
  });
});

describe("results", () => {
  it("appends each result to the run's batch once: a repeat and a stale attempt's upload store nothing new", async () => {
    const [job] = await claimedJobs(t.app, token, 1, "w-slow");
    expect(job.attempt).toBe(1);
    expect(new Date(job.expiresAt).getTime() - Date.now()).toBeLessThanOrEqual(EXPIRE_SECONDS * 1000);
    // w-slow says nothing; after the visibility timeout pg-boss hands the job to w-fast.
    const second = await until("the expired job to be claimed again", async () => {
      const res = await claim(t.app, token, "w-fast", 1);
      return (res.body.jobs as ClaimedJobDto[]).find((j) => j.id === job.id);
    });
    expect(second.attempt).toBe(2);

    // The slow worker's result arrives after all (its commit raced the expiry), then the fast one's.
    const late = await postResult(t.app, token, job, { worker: "w-slow", spec: { verdict: "fail", findings: [finding("clipping", "fail")] } });
    expect(late.status).toBe(201);
    expect(late.body).toMatchObject({ jobId: job.id, created: true });
    const repeat = await postResult(t.app, token, second, { worker: "w-fast" });
    expect(repeat.status).toBe(200);
    expect(repeat.body).toEqual({ ...late.body, created: false });
    expect((await postResult(t.app, token, job, { worker: "w-slow" })).status).toBe(200);

    const run = await detail(job.runId);
    expect(await FileResult.count({ where: { batchId: run.batchId } })).toBe(1);
    const stored = await FileResult.findByPk(late.body.fileResultId);
    expect(stored).toMatchObject({ path: job.path, verdict: "fail", batchId: run.batchId });
    expect(stored?.spectrogramKey).toMatch(/^images\//);
    const batch = await Batch.findByPk(run.batchId);
    expect([batch?.fileCount, batch?.failCount, batch?.passCount]).toEqual([1, 1, 0]);
    expect(await queueState(job)).toBe("completed");
    expect(run).toMatchObject({ state: "done", counts: { total: 1, done: 1, retried: 1 } });
    const attempts = await ScanJobAttempt.findAll({ where: { jobId: job.id }, order: [["attempt", "ASC"]] });
    expect(attempts.map((a) => [a.attempt, a.worker, a.outcome])).toEqual([
      [1, "w-slow", "done"],
      [2, "w-fast", "superseded"],
    ]);
    // The run finished with a failing file: supervisors get one e-mail naming it.
    const mail = readMailbox(`${t.dir}/mail`).filter((m) => m.subject.includes(run.collection.name) && m.text.includes(job.path));
    expect(mail).toHaveLength(1);
    expect(mail[0].to).toContain("harbour.supervisor@harbourside.test");
  });

  it("is seen in the Batches and Files views like an uploaded batch", async () => {
    const jobs = await claimedJobs(t.app, token, 2, "w-views");
    for (const job of jobs) expect((await postResult(t.app, token, job, { spec: { verdict: "warn" } })).status).toBe(201);
    const run = await detail(jobs[0].runId);
    const batch = await supervisorAgent.get(`/api/batches/${run.batchId}`);
    expect(batch.body).toMatchObject({ id: run.batchId, counts: { files: 2, warn: 2 }, profileName: "access-copy", toolVersion: "0.1.0-test" });
    const files = await supervisorAgent.get(`/api/files?batch=${run.batchId}&sort=path`);
    expect(files.body.items.map((f: { path: string }) => f.path)).toEqual(jobs.map((j) => j.path).sort());
    expect(run.verdicts).toEqual({ files: 2, pass: 0, warn: 2, fail: 0, error: 0 });
  });

  it("keeps one fixity history with uploads: a worker's changed SHA-256 fails against an uploaded scan, and the next upload is compared with the worker's", async () => {
    const collection = "Harbour Lighthouse Logs";
    const path = "logs/keeper-1954.wav";
    const uploaded = await ingest(t.app, token, { collection, batchKey: "lighthouse-1", report: scanReport([{ path, sha256: sha("reel as uploaded") }]) });
    expect(uploaded.status).toBe(201);
    const [earlier] = await FileResult.findAll({ where: { batchId: uploaded.body.batchId } });

    const run = await createRun(t.app, token, runRequest({ collection, name: "lighthouse rescan" }));
    expect((await addFiles(t.app, token, run.body.run.id, [fileOf(path)])).status).toBe(200);
    const job = await until("the lighthouse job to be claimed", async () => {
      const res = await claim(t.app, token, "w-fixity", 16);
      return (res.body.jobs as ClaimedJobDto[]).find((j) => j.runId === run.body.run.id);
    });
    const result = await postResult(t.app, token, job, { spec: { sha256: sha("reel as rescanned"), verdict: "warn" } });
    expect(result.status).toBe(201);
    const rescanned = await FileResult.findByPk(result.body.fileResultId);
    expect(rescanned).toMatchObject({ previousId: earlier.id, verdict: "fail" });
    expect(rescanned!.findingCodes).toContain("fixity-changed");
    const batch = await Batch.findByPk(run.body.run.batchId);
    expect([batch?.fileCount, batch?.warnCount, batch?.failCount]).toEqual([1, 0, 1]);
    const audit = await AuditEntry.findAll({ where: { action: "file.fixity_changed", targetId: String(rescanned!.id) } });
    expect(audit.map((a) => a.details)).toEqual([
      { path, previousFileResultId: earlier.id, previousSha256: sha("reel as uploaded"), sha256: sha("reel as rescanned") },
    ]);

    // An upload with the worker's SHA-256 is compared with the worker's scan, the latest: unchanged.
    const again = await ingest(t.app, token, { collection, batchKey: "lighthouse-2", report: scanReport([{ path, sha256: sha("reel as rescanned") }]) });
    expect(again.status).toBe(201);
    const [latest] = await FileResult.findAll({ where: { batchId: again.body.batchId } });
    expect(latest).toMatchObject({ previousId: rescanned!.id, verdict: "pass" });
    expect(latest.findingCodes).not.toContain("fixity-changed");
  });

  it("refuses a result for another file, of several files, or not multipart, with the one error shape", async () => {
    const [job] = await claimedJobs(t.app, token, 1, "w-bad");
    const wrong = await postResult(t.app, token, { ...job, path: "someone/else.wav" });
    expect(wrong.status).toBe(422);
    expect(wrong.body.error).toMatchObject({ code: "wrong_file", message: expect.stringContaining(job.path) });
    const json = await request(t.app).post(`/api/jobs/${job.id}/result`).set("Authorization", `Bearer ${token}`).send({ attempt: 1 });
    expect(json.status).toBe(415);
    const unknown = await postResult(t.app, token, { ...job, id: 999_999 });
    expect(unknown.status).toBe(404);
    const badField = await postResult(t.app, token, job, { attempt: 0 });
    expect(badField.status).toBe(400);
    expect(badField.body.error.message).toContain("attempt");
    expect(await ScanJob.findByPk(job.id)).toMatchObject({ state: "active", fileResultId: null });
    expect((await postResult(t.app, token, job)).status).toBe(201);
  });
});

describe("failures, release and expiry", () => {
  it("dead-letters a job whose retries are spent, lists it, and lets a supervisor queue it again", async () => {
    const [job] = await claimedJobs(t.app, token, 1, "w-fail");
    const stale = await request(t.app).post(`/api/jobs/${job.id}/fail`).set("Authorization", `Bearer ${token}`).send({ attempt: 7, worker: "w-fail", message: "x" });
    expect(stale.status).toBe(409);
    expect(stale.body.error.code).toBe("stale_attempt");
    await request(t.app).post(`/api/jobs/${job.id}/fail`).set("Authorization", `Bearer ${token}`).send({ attempt: 1, worker: "w-fail", message: "unreadable share" });
    const again: ClaimedJobDto[] = (await claim(t.app, token, "w-fail")).body.jobs;
    expect(again.map((j) => j.attempt)).toEqual([2]);
    await request(t.app).post(`/api/jobs/${job.id}/fail`).set("Authorization", `Bearer ${token}`).send({ attempt: 2, worker: "w-fail", message: "unreadable share (2)" });

    const dead = await t.db.sequelize.query<{ data: { scanJobId: number } }>(`select data from pgboss.job where name = $1 and (data->>'scanJobId')::int = $2`, {
      bind: [DEAD_LETTER_QUEUE, job.id],
      type: QueryTypes.SELECT,
    });
    expect(dead).toHaveLength(1);
    const run = await detail(job.runId);
    expect(run).toMatchObject({ state: "failed", counts: { failed: 1, queued: 0 } });
    expect(run.failedJobs).toEqual([expect.objectContaining({ id: job.id, state: "failed", attempts: 2, lastError: "unreadable share (2)" })]);
    expect((await claim(t.app, token, "w-fail")).body.jobs).toEqual([]);

    const notFailed = await supervisorAgent.post(`/api/jobs/${job.id + 100000}/retry`).set(CSRF_HEADER, "1");
    expect(notFailed.status).toBe(404);
    const retry = await supervisorAgent.post(`/api/jobs/${job.id}/retry`).set(CSRF_HEADER, "1");
    expect(retry.body).toEqual({ jobId: job.id, state: "queued", attempts: 2 });
    expect((await supervisorAgent.post(`/api/jobs/${job.id}/retry`).set(CSRF_HEADER, "1")).status).toBe(409);
    const third: ClaimedJobDto[] = (await claim(t.app, token, "w-fail")).body.jobs;
    expect(third.map((j) => [j.id, j.attempt])).toEqual([[job.id, 3]]);
    expect((await postResult(t.app, token, third[0])).status).toBe(201);
    expect((await detail(job.runId)).state).toBe("done");
    const actions = (await AuditEntry.findAll({ where: { targetType: "job", targetId: String(job.id) } })).map((a) => a.action);
    expect(actions).toEqual(expect.arrayContaining(["job.fail", "job.retry", "job.result"]));
  });

  it("releases a job straight back to the queue", async () => {
    const [job] = await claimedJobs(t.app, token, 1, "w-stop");
    const released = await request(t.app).post(`/api/jobs/${job.id}/release`).set("Authorization", `Bearer ${token}`).send({ attempt: 1, worker: "w-stop" });
    expect(released.body).toEqual({ jobId: job.id, state: "queued", attempts: 1 });
    const next: ClaimedJobDto[] = (await claim(t.app, token, "w-next")).body.jobs;
    expect(next.map((j) => [j.id, j.attempt])).toEqual([[job.id, 2]]);
    expect((await ScanJobAttempt.findOne({ where: { jobId: job.id, attempt: 1 } }))?.outcome).toBe("released");
    expect((await postResult(t.app, token, next[0])).status).toBe(201);
  });

  it("puts a silent worker's job back after the visibility timeout, and dead-letters it when that keeps happening", async () => {
    const [job] = await claimedJobs(t.app, token, 1, "w-dies");
    const requeued = await until("the expired job back in the queue", async () => {
      const row = await ScanJob.findByPk(job.id);
      return row?.state === "queued" && row;
    });
    expect(requeued.lastError).toMatch(/attempt 1 by w-dies sent no result within the visibility timeout/);
    expect((await ScanJobAttempt.findOne({ where: { jobId: job.id, attempt: 1 } }))?.outcome).toBe("expired");
    const again: ClaimedJobDto[] = (await claim(t.app, token, "w-dies-too")).body.jobs;
    expect(again.map((j) => j.attempt)).toEqual([2]);
    const failed = await until("the job dead-lettered", async () => {
      const row = await ScanJob.findByPk(job.id);
      return row?.state === "failed" && row;
    });
    expect(failed.lastError).toMatch(/retries spent/);
    expect((await detail(job.runId)).state).toBe("failed");
    // The second expiry is noticed by the reconcile pass or by the dead-letter copy, whichever comes first.
    const trail = (await AuditEntry.findAll({ where: { targetType: "job", targetId: String(job.id) }, order: [["id", "ASC"]] })).map((a) => a.action);
    expect(trail.filter((a) => a === "job.expire" || a === "job.dead_letter")).toHaveLength(2);
    expect(trail.filter((a) => a === "job.expire")[0]).toBe("job.expire");
  });
});

describe("dead-letter copies", () => {
  it("marks the job failed from its dead-letter copy, and ignores a copy of a job since retried", async () => {
    const [job] = await claimedJobs(t.app, token, 1, "w-copy");
    const row = (await ScanJob.findByPk(job.id))!;
    const stale = { scanJobId: job.id, runId: job.runId, queueJobId: "00000000-0000-7000-8000-000000000000" };
    expect(await markDeadLettered(t.db.sequelize, stale, { message: "old" })).toBe(false);
    expect((await ScanJob.findByPk(job.id))?.state).toBe("active");
    const copy = { scanJobId: job.id, runId: job.runId, queueJobId: row.queueJobId };
    expect(await markDeadLettered(t.db.sequelize, copy, { value: { message: "job failed by timeout in active state" } })).toBe(true);
    const failed = await ScanJob.findByPk(job.id);
    expect(failed?.state).toBe("failed");
    expect(failed?.lastError).toBe("attempt 1 by w-copy ended without a result (job failed by timeout in active state); retries spent");
    expect((await ScanJobAttempt.findOne({ where: { jobId: job.id, attempt: 1 } }))?.outcome).toBe("expired");
    // A second delivery of the same copy changes nothing.
    expect(await markDeadLettered(t.db.sequelize, copy, {})).toBe(false);
    expect(await AuditEntry.count({ where: { action: "job.dead_letter", targetId: String(job.id) } })).toBe(1);
  });
});

describe("progress and bad input", () => {
  it("counts jobs by state and measures throughput from the first claim to the last result", async () => {
    const jobs = await claimedJobs(t.app, token, 3, "w-count");
    await new Promise((r) => setTimeout(r, 300));
    for (const job of jobs.slice(0, 2)) await postResult(t.app, token, job);
    const run = await detail(jobs[0].runId);
    expect(run.counts).toEqual({ total: 3, queued: 0, active: 1, done: 2, failed: 0, retried: 0 });
    expect(run.state).toBe("running");
    expect(run.activeJobs.map((j) => [j.id, j.worker])).toEqual([[jobs[2].id, "w-count"]]);
    const elapsedMinutes = (Date.parse(run.lastResultAt!) - Date.parse(run.firstClaimAt!)) / 60_000;
    expect(elapsedMinutes).toBeGreaterThan(0);
    expect(run.throughput.filesPerMinute).toBeCloseTo(2 / elapsedMinutes, 3);
    // Each test report says 60 s of audio.
    expect(run.throughput.audioSecondsPerSecond).toBeCloseTo(120 / (elapsedMinutes * 60), 3);
    expect(run.throughput.recentFilesPerMinute).toBeGreaterThan(0);

    const list = await supervisorAgent.get("/api/runs?pageSize=100");
    const listed = (list.body.items as ScanRunDto[]).find((r) => r.id === run.id);
    expect(listed?.counts).toEqual(run.counts);
    const jobsPage = await supervisorAgent.get(`/api/runs/${run.id}/jobs?state=done`);
    expect(jobsPage.body).toMatchObject({ total: 2, items: [{ state: "done" }, { state: "done" }] });
    expect((await postResult(t.app, token, jobs[2])).status).toBe(201);
  });

  it("answers bad requests with 400/404/409/422 in the one error shape", async () => {
    const run = (await createRun(t.app, token, runRequest({ name: "bad input" }))).body.run as ScanRunDto;
    const auth = { Authorization: `Bearer ${token}` };
    const cases: [request.Test, number, string][] = [
      [request(t.app).post(`/api/runs/${run.id}/files`).set(auth).send({ files: [fileOf("../escape.wav")] }), 400, "files.0.path"],
      [request(t.app).post(`/api/runs/${run.id}/files`).set(auth).send({ files: [fileOf("/abs.wav")] }), 400, "files.0.path"],
      [request(t.app).post(`/api/runs/${run.id}/files`).set(auth).send({ files: Array.from({ length: 1001 }, (_, i) => fileOf(`f${i}.wav`)) }), 400, "at most 1000"],
      [request(t.app).post(`/api/runs/${run.id}/files`).set(auth).send({ files: [fileOf("x.wav"), fileOf("x.wav")] }), 409, "twice"],
      [request(t.app).post(`/api/runs/999999/files`).set(auth).send({ files: [fileOf("x.wav")] }), 404, "run 999999"],
      [request(t.app).post("/api/runs").set(auth).send({ ...runRequest(), root: "relative/path" }), 400, "root"],
      [request(t.app).post("/api/runs").set(auth).send(runRequest({ name: "bad hash", profile: { ...runRequest().profile, hash: "0".repeat(64) } })), 422, "does not match"],
      [request(t.app).post("/api/runs").set(auth).send(runRequest({ name: "bad profile", profile: { ...runRequest().profile, definition: { name: "access-copy", thresholds: { truePeakDbtp: "loud" } } } })), 422, "thresholds"],
      [request(t.app).post("/api/jobs/claim").set(auth).send({ worker: "w", max: 17 }), 400, "max"],
      [request(t.app).post("/api/jobs/claim").set(auth).send({}), 400, "worker"],
      [request(t.app).post("/api/jobs/abc/fail").set(auth).send({ attempt: 1, worker: "w", message: "m" }), 400, "job id"],
      [request(t.app).get("/api/runs/424242").set(auth), 404, "run 424242"],
      [request(t.app).get(`/api/runs/${run.id}/jobs?state=lost`).set(auth), 400, "state"],
    ];
    for (const [req, status, text] of cases) {
      const res = await req;
      expect([res.status, res.body.error?.message]).toEqual([status, expect.stringContaining(text)]);
      expect(res.body.error.code).toEqual(expect.any(String));
    }
    expect(await ScanJob.count({ where: { runId: run.id } })).toBe(0);
  });
});
