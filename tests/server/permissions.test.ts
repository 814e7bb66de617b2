/**
 * Every route × every role × anonymous, generated from one table, with every credential kind a route
 * accepts. The expectation table below is written from the roles table in the product notes
 * (the product notes, ../shared/README.md beside the repository), not imported from the server, so a drift in server/src/permissions.ts shows up here.
 */
import request from "supertest";
import type TestAgent from "supertest/lib/agent.js";
import { afterAll, beforeAll, expect, it } from "vitest";
import { encodeFingerprint, FINGERPRINT_VERSION } from "@tidemark/shared/fingerprint/index";
import { CSRF_HEADER, ROLES, type ClaimedJobDto, type Role } from "@tidemark/shared/types/api";
import { ApiToken, FileResult, type User } from "../../server/src/models/index.ts";
import { createApiToken } from "../../server/src/services/apiTokens.ts";
import { reviewParts, reviewReport } from "./helpers/artefacts.ts";
import { finding, ingest, scanReport } from "./helpers/reports.ts";
import { claimedJobs, createRun, deadJob, fileOf, runRequest } from "./helpers/runs.ts";
import { startTestApp, TEST_PASSWORD, type TestApp } from "./helpers/testApp.ts";

const collectionOf = async (fx: Fixture): Promise<number> => (await FileResult.findByPk(fx.fileId))!.collectionId;

// The product notes (../shared/README.md), "Who uses it": the roles table, row by row.
const README_TABLE = {
  view: ["admin", "supervisor", "technician", "auditor"],
  upload: ["admin", "supervisor", "technician"],
  comment: ["admin", "supervisor", "technician"],
  review: ["admin", "supervisor"],
  export: ["admin", "supervisor", "auditor"],
  manageUsers: ["admin"],
  ownTokens: ["admin", "supervisor", "technician"],
  // Not a row of the notes' table: deleting a batch (issue #16, no orphans) is given to admins only.
  deleteBatches: ["admin"],
} as const satisfies Record<string, readonly Role[]>;

type Access = keyof typeof README_TABLE | "signedIn" | "public";
type Via = "session" | "token";

interface Fixture {
  fileId: number;
  batchId: number;
  userIds: Record<Role, number>;
  otherUserId: number;
  adminsToken: string;
}

interface Caller {
  role: Role | "anonymous";
  via: Via | null;
  user: User | null;
}

interface RouteCase {
  method: "get" | "post" | "patch" | "delete";
  path: (fx: Fixture, caller: Caller) => Promise<string> | string;
  access: Access;
  /** Credential kinds the route accepts; others are refused for every role. */
  accepts: Via[];
  ok: number;
  body?: (fx: Fixture, caller: Caller) => object;
  /** A text/plain body instead of JSON. */
  textBody?: () => string;
  /** The status an authenticated caller without the permission gets (default 403). */
  denied?: number;
  multipart?: boolean;
  /** Multipart parts of another kind than ingest's (added to the request as built). */
  attach?: (req: request.Test) => request.Test;
}

const both: Via[] = ["session", "token"];
const EMPTY_FINGERPRINT = encodeFingerprint({ version: FINGERPRINT_VERSION, hashes: new Uint32Array(0), times: new Float32Array(0), durationSeconds: 0 });
let n = 0;
const unique = (): string => `${Date.now()}-${++n}`;

// Distributed scanning: one run per owner for the read routes, and a fresh job per call for the worker's
// writes, claimed with the caller's own token when the caller may upload: results, failures, releases and
// run files are taken only from the job's (or run's) own token or user, or an admin (issue #19), and that
// rule has its own test (jobHeartbeats.test.ts); this matrix checks the roles.
const matrixRuns = new Map<string, Promise<number>>();
const ownToken = (fx: Fixture, caller?: Caller): string =>
  caller && caller.role !== "anonymous" && caller.via === "token" && (README_TABLE.upload as readonly string[]).includes(caller.role) ? tokens[caller.role] : fx.adminsToken;
const runId = (fx: Fixture, caller?: Caller): Promise<number> => {
  const token = ownToken(fx, caller);
  let run = matrixRuns.get(token);
  if (!run) {
    run = createRun(t.app, token, runRequest({ name: `matrix run ${matrixRuns.size + 1}` })).then((r) => r.body.run.id as number);
    matrixRuns.set(token, run);
  }
  return run;
};
let lastJob: ClaimedJobDto | null = null;
const freshJob = async (fx: Fixture, dead = false, caller?: Caller): Promise<number> => {
  const token = ownToken(fx, caller);
  lastJob = dead ? await deadJob(t.app, token) : (await claimedJobs(t.app, token, 1))[0];
  return lastJob.id;
};
const attemptBody = () => ({ attempt: lastJob!.attempt, worker: "matrix-worker" });

/** A batch of its own for each delete call. */
async function freshBatch(fx: Fixture): Promise<string> {
  const res = await ingest(t.app, fx.adminsToken, { collection: "Matrix Collection", batchKey: `matrix-delete-${unique()}`, report: scanReport([{ path: "d.wav" }]) });
  return `/api/batches/${res.body.batchId}`;
}

async function ownTokenId(caller: Caller): Promise<string> {
  if (!caller.user) return "tmnotatoken";
  return (await createApiToken(caller.user.id, "to revoke")).token.id;
}

const ROUTES: RouteCase[] = [
  { method: "get", path: () => "/api/health", access: "public", accepts: both, ok: 200 },
  { method: "post", path: () => "/api/password-reset", access: "public", accepts: both, ok: 202, body: () => ({ email: "nobody@harbourside.test" }) },
  { method: "post", path: () => "/api/password-reset/confirm", access: "public", accepts: both, ok: 400, body: () => ({ token: "nope", password: "a-long-enough-password" }) },
  { method: "get", path: () => "/api/session", access: "signedIn", accepts: both, ok: 200 },
  { method: "post", path: () => "/api/fixity-checks", access: "upload", accepts: ["token"], ok: 404, body: () => ({ collection: "no such collection", checkedAt: new Date().toISOString(), checks: [{ path: "a.wav", outcome: "unchanged", expectedSha256: null, actualSha256: null, movedTo: null, detail: "" }] }) },
  // The test app offers no CLI package: allowed callers learn that (404), others are refused first.
  { method: "get", path: () => "/api/cli-package", access: "view", accepts: both, ok: 404 },
  { method: "get", path: () => "/api/collections", access: "view", accepts: both, ok: 200 },
  { method: "get", path: () => "/api/batches", access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/batches/${fx.batchId}`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: () => "/api/files?sort=path", access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/files/${fx.fileId}`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/files/${fx.fileId}/spectrogram.png`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/files/${fx.fileId}/waveform.png`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/files/${fx.fileId}/comments`, access: "view", accepts: both, ok: 200 },
  // Issue #16: close-ups, excerpts (auditors may listen), level grid, loudness curve, batch overview.
  { method: "get", path: (fx) => `/api/files/${fx.fileId}/closeups/0/spectrogram.png`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/files/${fx.fileId}/closeups/0/waveform.png`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/files/${fx.fileId}/closeups/0/excerpt`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/files/${fx.fileId}/closeups/1/excerpt`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/files/${fx.fileId}/level-grid`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/files/${fx.fileId}/loudness-curve`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/batches/${fx.batchId}/overview`, access: "view", accepts: both, ok: 200 },
  { method: "delete", path: (fx) => freshBatch(fx), access: "deleteBatches", accepts: both, ok: 204 },
  { method: "get", path: (fx) => `/api/files/${fx.fileId}/duplicates`, access: "view", accepts: both, ok: 200 },
  { method: "post", path: () => "/api/duplicates/lookup", access: "view", accepts: ["token"], ok: 200, textBody: () => EMPTY_FINGERPRINT },
  { method: "post", path: (fx) => `/api/files/${fx.fileId}/comments`, access: "comment", accepts: both, ok: 201, body: () => ({ body: "Matrix comment" }) },
  { method: "post", path: (fx) => `/api/files/${fx.fileId}/comments`, access: "comment", accepts: both, ok: 201, body: () => ({ body: "Anchored matrix comment", atSeconds: 12.5, channel: 1 }) },
  { method: "patch", path: (fx) => `/api/files/${fx.fileId}`, access: "review", accepts: both, ok: 200, body: () => ({ reviewState: n % 2 ? "flagged" : "accepted", reason: "matrix" }) },
  { method: "post", path: () => "/api/files/review", access: "review", accepts: both, ok: 200, body: (fx) => ({ ids: [fx.fileId], reviewState: "pending", reason: "matrix" }) },
  { method: "get", path: () => "/api/exports/files.csv", access: "export", accepts: both, ok: 200 },
  { method: "get", path: () => "/api/exports/audit.csv", access: "export", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/exports/batches/${fx.batchId}.json`, access: "export", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/exports/batches/${fx.batchId}.pdf`, access: "export", accepts: both, ok: 200 },
  { method: "get", path: (fx) => `/api/exports/batches/${fx.batchId}.premis.xml`, access: "export", accepts: both, ok: 200 },
  { method: "get", path: async (fx) => `/api/exports/collections/${await collectionOf(fx)}.premis.xml`, access: "export", accepts: both, ok: 200 },
  { method: "get", path: async (fx) => `/api/exports/collections/${await collectionOf(fx)}.json`, access: "export", accepts: both, ok: 200 },
  { method: "get", path: () => "/api/audit", access: "export", accepts: both, ok: 200 },
  { method: "post", path: () => "/api/ingest", access: "upload", accepts: ["token"], ok: 201, multipart: true },
  { method: "post", path: () => "/api/runs", access: "upload", accepts: ["token"], ok: 201, body: () => runRequest({ name: `matrix ${unique()}` }) },
  { method: "post", path: async (fx, caller) => `/api/runs/${await runId(fx, caller)}/files`, access: "upload", accepts: ["token"], ok: 200, body: () => ({ files: [fileOf(`matrix/${unique()}.wav`)] }) },
  { method: "get", path: () => "/api/runs", access: "view", accepts: both, ok: 200 },
  { method: "get", path: async (fx) => `/api/runs/${await runId(fx)}`, access: "view", accepts: both, ok: 200 },
  { method: "get", path: async (fx) => `/api/runs/${await runId(fx)}/jobs`, access: "view", accepts: both, ok: 200 },
  { method: "post", path: async (fx) => `/api/runs/${await runId(fx)}/retry`, access: "review", accepts: both, ok: 200 },
  { method: "post", path: () => "/api/jobs/claim", access: "upload", accepts: ["token"], ok: 200, body: () => ({ worker: "matrix-worker", max: 1 }) },
  {
    method: "post",
    path: async (fx, caller) => `/api/jobs/${await freshJob(fx, false, caller)}/result`,
    access: "upload",
    accepts: ["token"],
    ok: 201,
    attach: (req) =>
      req
        .field("attempt", String(lastJob!.attempt))
        .field("worker", "matrix-worker")
        .attach("report", Buffer.from(JSON.stringify(scanReport([{ path: lastJob!.path }]))), "report.json"),
  },
  { method: "post", path: async (fx, caller) => `/api/jobs/${await freshJob(fx, false, caller)}/fail`, access: "upload", accepts: ["token"], ok: 200, body: () => ({ ...attemptBody(), message: "matrix failure" }) },
  { method: "post", path: async (fx, caller) => `/api/jobs/${await freshJob(fx, false, caller)}/release`, access: "upload", accepts: ["token"], ok: 200, body: attemptBody },
  {
    method: "post",
    path: async (fx, caller) => {
      await freshJob(fx, false, caller);
      return "/api/jobs/heartbeat";
    },
    access: "upload",
    accepts: ["token"],
    ok: 200,
    body: () => ({ worker: "matrix-worker", jobs: [{ id: lastJob!.id, attempt: lastJob!.attempt }] }),
  },
  { method: "post", path: async (fx) => `/api/jobs/${await freshJob(fx)}/requeue`, access: "review", accepts: both, ok: 200 },
  { method: "post", path: async (fx) => `/api/jobs/${await freshJob(fx, true)}/retry`, access: "review", accepts: both, ok: 200 },
  { method: "get", path: () => "/api/tokens", access: "ownTokens", accepts: ["session"], ok: 200 },
  { method: "post", path: () => "/api/tokens", access: "ownTokens", accepts: ["session"], ok: 201, body: () => ({ name: `matrix ${unique()}` }) },
  { method: "delete", path: async (_fx, caller) => `/api/tokens/${await ownTokenId(caller)}`, access: "ownTokens", accepts: ["session"], ok: 204 },
  { method: "get", path: () => "/api/tokens?all=1", access: "manageUsers", accepts: ["session"], ok: 200 },
  // Someone else's token: admins may revoke it; owners-only roles must not even learn it exists.
  {
    method: "delete",
    path: async (fx) => `/api/tokens/${(await createApiToken(fx.otherUserId, "someone else's")).token.id}`,
    access: "manageUsers",
    accepts: ["session"],
    ok: 204,
    denied: 404,
  },
  { method: "get", path: () => "/api/users", access: "manageUsers", accepts: ["session"], ok: 200 },
  {
    method: "post",
    path: () => "/api/users",
    access: "manageUsers",
    accepts: ["session"],
    ok: 201,
    body: () => ({ email: `new-${unique()}@harbourside.test`, name: "New Person", role: "technician", password: "a-perfectly-fine-passphrase" }),
  },
  { method: "patch", path: (fx) => `/api/users/${fx.otherUserId}`, access: "manageUsers", accepts: ["session"], ok: 200, body: () => ({ name: `Renamed ${unique()}` }) },
];

function allowed(access: Access, role: Role): boolean {
  if (access === "public" || access === "signedIn") return true;
  return (README_TABLE[access] as readonly Role[]).includes(role);
}

/** What the table says this caller must get. */
function expected(route: RouteCase, caller: Caller): number {
  if (route.access === "public") return route.ok;
  if (caller.role === "anonymous") return 401;
  // Token-only routes ask for a token (401); session-only routes refuse a token (403).
  if (!route.accepts.includes(caller.via!)) return route.accepts.includes("token") ? 401 : 403;
  if (route.denied && !allowed(route.access, caller.role) && allowed("ownTokens", caller.role)) return route.denied;
  return allowed(route.access, caller.role) ? route.ok : 403;
}

let t: TestApp;
let fx: Fixture;
const sessions = {} as Record<Role, TestAgent>;
const tokens = {} as Record<Role, string>;
const users = {} as Record<Role, User>;

beforeAll(async () => {
  t = await startTestApp({ label: "perm", settings: { loginRateLimit: { windowMs: 60_000, limit: 1000 }, passwordResetRateLimit: { windowMs: 60_000, limit: 1000 } } });
  for (const role of ROLES) {
    users[role] = await t.createUser(role);
    sessions[role] = await t.signInAs(users[role].email, TEST_PASSWORD);
    // Tokens are minted directly: the auditor's stands for one kept from before a demotion.
    tokens[role] = (await createApiToken(users[role].id, "matrix")).plaintext;
  }
  const other = await t.createUser("technician");
  const upload = await ingest(t.app, tokens.admin, {
    collection: "Matrix Collection",
    batchKey: "matrix-fixture",
    // A "tidemark.report/2" file with every review artefact: overview PNGs, grid, curve, two close-ups.
    report: reviewReport([{ path: "m.wav", findings: [finding("hum", "fail"), finding("dropout", "fail"), finding("clipping", "fail")] }]),
    images: reviewParts(0).parts,
  });
  expect(upload.status).toBe(201);
  const file = await FileResult.findOne({ where: { batchId: upload.body.batchId } });
  fx = {
    fileId: file!.id,
    batchId: upload.body.batchId,
    userIds: Object.fromEntries(ROLES.map((r) => [r, users[r].id])) as Record<Role, number>,
    otherUserId: other.id,
    adminsToken: tokens.admin,
  };
});
afterAll(() => t.close());

async function call(route: RouteCase, caller: Caller): Promise<number> {
  const url = await route.path(fx, caller);
  if (route.multipart) {
    const report = scanReport([{ path: "upload.wav" }]);
    const token = caller.via === "token" && caller.role !== "anonymous" ? tokens[caller.role] : null;
    let req = caller.via === "session" && caller.role !== "anonymous" ? sessions[caller.role].post(url).set(CSRF_HEADER, "1") : ingest(t.app, token, {});
    req = req.field("collection", "Matrix Collection").field("batchKey", `matrix-${unique()}`).attach("report", Buffer.from(JSON.stringify(report)), "report.json");
    return (await req).status;
  }
  let req;
  if (caller.role === "anonymous") req = request(t.app)[route.method](url);
  else if (caller.via === "session") req = sessions[caller.role][route.method](url).set(CSRF_HEADER, "1");
  else req = request(t.app)[route.method](url).set("Authorization", `Bearer ${tokens[caller.role]}`);
  if (route.body) req = req.send(route.body(fx, caller));
  if (route.attach) req = route.attach(req);
  if (route.textBody) req = req.set("content-type", "text/plain").send(route.textBody());
  const res = await req;
  if (res.status >= 400) expect(res.body.error, `${route.method} ${url}: one JSON error shape`).toMatchObject({ code: expect.any(String), message: expect.any(String) });
  return res.status;
}

it("matches the roles table on every route, for every role, credential kind and anonymous: 0 escapes", async () => {
  const mismatches: string[] = [];
  let checked = 0;
  for (const route of ROUTES) {
    const callers: Caller[] = [{ role: "anonymous", via: null, user: null }];
    for (const role of ROLES) for (const via of both) callers.push({ role, via, user: users[role] });
    for (const caller of callers) {
      const want = expected(route, caller);
      const got = await call(route, caller);
      checked++;
      if (got !== want) mismatches.push(`${route.method.toUpperCase()} ${await route.path(fx, caller)} as ${caller.role}/${caller.via ?? "-"}: got ${got}, want ${want}`);
    }
  }
  expect(mismatches).toEqual([]);
  expect(checked).toBe(ROUTES.length * (1 + ROLES.length * 2));
  expect(await ApiToken.count()).toBeGreaterThan(ROLES.length);
});

it("answers an unknown API route with the JSON 404 for everyone", async () => {
  for (const agent of [request(t.app), sessions.admin]) {
    const res = await agent.get("/api/no-such-thing");
    expect(res.status).toBe(404);
    expect(res.headers["content-type"]).toMatch(/application\/json/);
    expect(res.body.error.code).toBe("route_not_found");
  }
});
