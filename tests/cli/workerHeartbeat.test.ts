/**
 * The worker loop's heartbeat against a fake server: a job the server reports lost while the worker measures
 * it is said to be taken back; a heartbeat that only crosses the job's result on its way (the server has just
 * stored it, so the job is no longer active) is no loss and says nothing. The engine and the API are fakes:
 * the loop's own bookkeeping is what is checked (the real server's side: tests/server/jobHeartbeats.test.ts).
 */
import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, expect, it } from "vitest";
import { findBuiltinProfile } from "../../shared/src/profiles/builtinProfiles.ts";
import type { ClaimedJobDto } from "../../shared/src/types/api.ts";
import type { FileReport } from "../../shared/src/types/report.ts";
import type { ApiClient } from "../../cli/src/api/apiClient.ts";
import { loaded } from "../../cli/src/profiles/loadProfile.ts";
import type { ScanEngine, ScanEngines } from "../../cli/src/queue/scanEngines.ts";
import { startWorkerLoop } from "../../cli/src/queue/workerLoop.ts";

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), "tidemark-heartbeat-"));
  await writeFile(path.join(dir, "take-01.wav"), Buffer.alloc(64));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

/** One job, a heartbeat every 500 ms that calls it lost, a scan and a result upload of the given lengths. */
async function runOneJob(scanMs: number, uploadMs: number): Promise<string[]> {
  const profile = loaded(findBuiltinProfile("access-copy")!);
  const job: ClaimedJobDto = {
    id: 7,
    attempt: 1,
    runId: 1,
    collection: "Harbourside Sound Archive",
    path: "take-01.wav",
    absPath: path.join(dir, "take-01.wav"),
    sizeBytes: 64,
    mtimeMs: 0,
    expiresAt: new Date(Date.now() + 60_000).toISOString(),
    profile: { name: profile.profile.name, hash: profile.hash, definition: profile.profile } as ClaimedJobDto["profile"],
  };
  const fileReport = { path: job.path, verdict: "pass", findings: [] } as unknown as FileReport;
  const engine = {
    profile,
    context: { spectrograms: null },
    pool: {
      run: async () => {
        await sleep(scanMs);
        return { kind: "analysed", file: { report: fileReport, audioSeconds: 1, imageError: null } };
      },
    },
  } as unknown as ScanEngine;
  const engines: ScanEngines = { imageDir: null, forProfile: () => engine, terminate: async () => {}, close: async () => {} };
  let claims = 0;
  let stored = false;
  const api = {
    server: "http://127.0.0.1:9",
    async postJson(url: string) {
      if (url === "/api/jobs/claim") {
        claims += 1;
        if (claims === 1) return { status: 200, body: { jobs: [job], heartbeatIntervalSeconds: 0.5 } };
        await sleep(50);
        return { status: 200, body: { jobs: [], heartbeatIntervalSeconds: 0.5 } };
      }
      if (url === "/api/jobs/heartbeat") return { status: 200, body: { held: [], lost: [job.id] } };
      return { status: 200, body: {} };
    },
    async postForm() {
      await sleep(uploadMs);
      stored = true;
      return { status: 201, body: { created: true } };
    },
  } as unknown as ApiClient;
  const lines: string[] = [];
  const control = startWorkerLoop({
    api,
    engines,
    worker: "tester",
    concurrency: 1,
    pollMs: 50,
    mounts: [],
    exitWhenIdle: false,
    graceMs: 2_000,
    firstContactMs: 10_000,
    offlineLimitMs: 10_000,
    log: (line) => lines.push(line),
    verbose: false,
  });
  const end = Date.now() + 10_000;
  while (!stored && Date.now() < end) await sleep(20);
  control.stop();
  await control.finished;
  expect(stored).toBe(true);
  return lines;
}

it("says a job was taken back when the server reports it lost while it is measured", { timeout: 20_000 }, async () => {
  const lines = await runOneJob(1600, 0);
  expect(lines.filter((l) => l.includes("the server took it back"))).toHaveLength(1);
});

it("says nothing when the only lost heartbeats cross the job's result on its way", { timeout: 20_000 }, async () => {
  const lines = await runOneJob(0, 1600);
  expect(lines.filter((l) => l.includes("the server took it back"))).toEqual([]);
});
