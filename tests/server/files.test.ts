/** Listing, filtering and sorting files and batches; review changes and comments with their trail. */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type TestAgent from "supertest/lib/agent.js";
import { CSRF_HEADER, type FileSummaryDto } from "@tidemark/shared/types/api";
import { AuditEntry, ReviewEvent } from "../../server/src/models/index.ts";
import { finding, ingest, scanReport } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

let t: TestApp;
let supervisor: TestAgent;
let technician: TestAgent;
let batchA: number;
let batchB: number;
let choirId: number;

beforeAll(async () => {
  t = await startTestApp({ label: "files" });
  const token = await t.tokenFor(await t.createUser("technician"));
  const a = await ingest(t.app, token, {
    collection: "Lighthouse Choir Reels",
    batchKey: "lcr-1",
    report: scanReport([
      { path: "reel-03/hymn.wav", verdict: "fail", integratedLufs: -18, truePeakDbtp: 0.4, durationSeconds: 200, findings: [finding("clipping", "fail"), finding("hum", "warn")] },
      { path: "reel-01/intro.wav", verdict: "pass", integratedLufs: -24, truePeakDbtp: -3, durationSeconds: 30 },
      { path: "reel-02/silence.wav", verdict: "warn", integratedLufs: null, truePeakDbtp: null, durationSeconds: 90, findings: [finding("lead-silence", "warn")] },
      { path: "reel-02/100%_take.wav", verdict: "error", integratedLufs: -30, durationSeconds: 5 },
    ]),
  });
  const b = await ingest(t.app, token, {
    collection: "Ferry Terminal Interviews 1978",
    batchKey: "fti-1",
    report: scanReport([{ path: "tape-07/harbourmaster.wav", verdict: "fail", integratedLufs: -20, findings: [finding("dropout", "fail")] }]),
  });
  batchA = a.body.batchId;
  batchB = b.body.batchId;
  supervisor = (await t.signIn("supervisor")).agent;
  technician = (await t.signIn("technician")).agent;
  choirId = (await supervisor.get("/api/collections")).body.find((c: { name: string }) => c.name === "Lighthouse Choir Reels").id;
});
afterAll(() => t.close());

const paths = (items: FileSummaryDto[]): string[] => items.map((f) => f.path);

describe("GET /api/files", () => {
  it("filters by batch, collection, verdict, review state, finding and path text", async () => {
    const get = async (q: string) => (await supervisor.get(`/api/files?sort=path&${q}`)).body as { items: FileSummaryDto[]; total: number };
    expect((await get(`batch=${batchB}`)).total).toBe(1);
    expect((await get(`collection=${choirId}`)).total).toBe(4);
    expect(paths((await get("verdict=fail")).items)).toEqual(["reel-03/hymn.wav", "tape-07/harbourmaster.wav"]);
    expect(paths((await get("finding=hum")).items)).toEqual(["reel-03/hymn.wav"]);
    expect((await get("reviewState=pending")).total).toBe(5);
    expect(paths((await get("q=REEL-02")).items)).toEqual(["reel-02/100%_take.wav", "reel-02/silence.wav"]);
    // LIKE wildcards in the search are literal characters.
    expect(paths((await get("q=100%25_")).items)).toEqual(["reel-02/100%_take.wav"]);
    expect((await get("q=%25")).total).toBe(1);
    expect((await get(`verdict=fail&collection=${choirId}&finding=clipping`)).total).toBe(1);
  });

  it("sorts with NULL (a quiet −∞ level) as the smallest value, in both directions", async () => {
    const sorted = async (q: string) => paths((await supervisor.get(`/api/files?collection=${choirId}&${q}`)).body.items);
    expect(await sorted("sort=integratedLufs&order=asc")).toEqual(["reel-02/silence.wav", "reel-02/100%_take.wav", "reel-01/intro.wav", "reel-03/hymn.wav"]);
    expect(await sorted("sort=integratedLufs&order=desc")).toEqual(["reel-03/hymn.wav", "reel-01/intro.wav", "reel-02/100%_take.wav", "reel-02/silence.wav"]);
    expect(await sorted("sort=durationSeconds")).toEqual(["reel-02/100%_take.wav", "reel-01/intro.wav", "reel-02/silence.wav", "reel-03/hymn.wav"]);
    // Verdicts sort in the contract's order: pass, warn, fail, error.
    expect(await sorted("sort=verdict")).toEqual(["reel-01/intro.wav", "reel-02/silence.wav", "reel-03/hymn.wav", "reel-02/100%_take.wav"]);
    expect((await sorted("sort=truePeakDbtp&order=desc"))[0]).toBe("reel-03/hymn.wav");
  });

  it("pages, and each row carries what the table shows", async () => {
    const page1 = (await supervisor.get("/api/files?sort=path&pageSize=2&page=1")).body;
    const page3 = (await supervisor.get("/api/files?sort=path&pageSize=2&page=3")).body;
    expect(page1).toMatchObject({ total: 5, page: 1, pageSize: 2 });
    expect(page1.items).toHaveLength(2);
    expect(page3.items).toHaveLength(1);
    const hymn = (await supervisor.get("/api/files?q=hymn")).body.items[0] as FileSummaryDto;
    expect(hymn).toMatchObject({
      batchId: batchA,
      collection: { id: choirId, name: "Lighthouse Choir Reels" },
      verdict: "fail",
      reviewState: "pending",
      integratedLufs: -18,
      truePeakDbtp: 0.4,
      durationSeconds: 200,
      hasSpectrogram: false,
      worstFindings: [
        { code: "clipping", severity: "fail", count: 1 },
        { code: "hum", severity: "warn", count: 1 },
      ],
    });
    expect(hymn.format).toMatchObject({ sampleRateHz: 96000, bitDepth: 24 });
  });

  it("pages by cursor through NULL levels both ways, and refuses a cursor that does not fit", async () => {
    // 5 files sorted by loudness: the quiet ones (NULL) first, so the walk crosses from NULL to values.
    const all = (await supervisor.get("/api/files?sort=integratedLufs&order=asc&pageSize=5")).body;
    expect(all).toMatchObject({ total: 5, totalIsEstimate: false, nextCursor: null, prevCursor: null });
    const ids = (items: FileSummaryDto[]) => items.map((f) => f.id);
    const p1 = (await supervisor.get("/api/files?sort=integratedLufs&order=asc&pageSize=2")).body;
    expect(p1.prevCursor).toBeNull();
    const p2 = (await supervisor.get(`/api/files?sort=integratedLufs&order=asc&pageSize=2&page=2&after=${p1.nextCursor}`)).body;
    const p3 = (await supervisor.get(`/api/files?sort=integratedLufs&order=asc&pageSize=2&page=3&after=${p2.nextCursor}`)).body;
    expect([...ids(p1.items), ...ids(p2.items), ...ids(p3.items)]).toEqual(ids(all.items));
    expect(p2.page).toBe(2);
    expect(p3.nextCursor).toBeNull();
    const back = (await supervisor.get(`/api/files?sort=integratedLufs&order=asc&pageSize=2&before=${p3.prevCursor}`)).body;
    expect(ids(back.items)).toEqual(ids(p2.items));
    expect(back.nextCursor).not.toBeNull();
    const first = (await supervisor.get(`/api/files?sort=integratedLufs&order=asc&pageSize=2&before=${back.prevCursor}`)).body;
    expect(ids(first.items)).toEqual(ids(p1.items));
    expect(first.prevCursor).toBeNull();
    // Same walk descending: NULLs come last.
    const desc = (await supervisor.get("/api/files?sort=integratedLufs&order=desc&pageSize=5")).body;
    const d1 = (await supervisor.get("/api/files?sort=integratedLufs&order=desc&pageSize=3")).body;
    const d2 = (await supervisor.get(`/api/files?sort=integratedLufs&order=desc&pageSize=3&after=${d1.nextCursor}`)).body;
    expect([...ids(d1.items), ...ids(d2.items)]).toEqual(ids(desc.items));

    const bad = await supervisor.get("/api/files?sort=integratedLufs&after=not-a-cursor");
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toMatch(/after: expected a cursor/);
    const otherSort = await supervisor.get(`/api/files?sort=path&after=${p1.nextCursor}`);
    expect(otherSort.status).toBe(400);
    expect(otherSort.body.error.message).toMatch(/cursor belongs to sort=integratedLufs&order=asc/);
    const both = await supervisor.get(`/api/files?sort=integratedLufs&after=${p1.nextCursor}&before=${p1.nextCursor}`);
    expect(both.status).toBe(400);
  });

  it("treats empty filter values as absent (the portal's cleared filters)", async () => {
    const res = await supervisor.get("/api/files?verdict=&q=&batch=");
    expect(res.status).toBe(200);
    expect(res.body.total).toBe(5);
  });
});

describe("GET /api/batches", () => {
  it("lists batches with counts, filters by collection and date, sorts by fail count", async () => {
    const all = (await technician.get("/api/batches")).body;
    expect(all.total).toBe(2);
    const choir = (await technician.get(`/api/batches?collection=${choirId}`)).body.items;
    expect(choir).toHaveLength(1);
    expect(choir[0]).toMatchObject({ batchKey: "lcr-1", counts: { files: 4, pass: 1, warn: 1, fail: 1, error: 1 }, collection: { name: "Lighthouse Choir Reels" } });
    // The fixture reports were scanned on 2026-12-01.
    expect((await technician.get("/api/batches?from=2026-12-01&to=2026-12-01")).body.total).toBe(2);
    expect((await technician.get("/api/batches?to=2026-11-30")).body.total).toBe(0);
    const byName = (await technician.get("/api/batches?sort=collection&order=asc")).body.items.map((b: { collection: { name: string } }) => b.collection.name);
    expect(byName).toEqual(["Ferry Terminal Interviews 1978", "Lighthouse Choir Reels"]);
    expect((await technician.get(`/api/batches/${batchB}`)).body.batchKey).toBe("fti-1");
    expect((await technician.get("/api/batches/99999")).status).toBe(404);
  });
});

describe("review and comments", () => {
  it("changes a review state with a reason, records the event and an audit entry with the request id", async () => {
    const id = (await supervisor.get("/api/files?q=hymn")).body.items[0].id;
    const res = await supervisor.patch(`/api/files/${id}`).set(CSRF_HEADER, "1").set("X-Request-Id", "review-req-1").send({ reviewState: "retransfer", reason: "clipping on the loud verse" });
    expect(res.status).toBe(200);
    expect(res.body.reviewState).toBe("retransfer");
    expect(res.body.reviewEvents).toHaveLength(1);
    expect(res.body.reviewEvents[0]).toMatchObject({ fromState: "pending", toState: "retransfer", reason: "clipping on the loud verse" });
    const audit = await AuditEntry.findOne({ where: { action: "file.review", targetId: String(id) } });
    expect(audit?.requestId).toBe("review-req-1");
    expect(audit?.details).toMatchObject({ from: "pending", to: "retransfer" });
    const bad = await supervisor.patch(`/api/files/${id}`).set(CSRF_HEADER, "1").send({ reviewState: "lost" });
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toContain("reviewState");
  });

  it("changes many files in one go, all or nothing", async () => {
    const ids = (await supervisor.get(`/api/files?collection=${choirId}&sort=path`)).body.items.map((f: FileSummaryDto) => f.id);
    const eventsBefore = await ReviewEvent.count();
    const missing = await supervisor.post("/api/files/review").set(CSRF_HEADER, "1").send({ ids: [...ids, 999999], reviewState: "accepted", reason: "bulk" });
    expect(missing.status).toBe(404);
    expect(missing.body.error.message).toContain("999999");
    expect(await ReviewEvent.count()).toBe(eventsBefore);
    const res = await supervisor.post("/api/files/review").set(CSRF_HEADER, "1").send({ ids, reviewState: "accepted", reason: "bulk" });
    expect(res.status).toBe(200);
    expect(res.body.changed).toBe(ids.length);
    expect(res.body.items.every((f: FileSummaryDto) => f.reviewState === "accepted")).toBe(true);
    const again = await supervisor.post("/api/files/review").set(CSRF_HEADER, "1").send({ ids, reviewState: "accepted", reason: "bulk" });
    expect(again.body.changed).toBe(0);
    expect(await ReviewEvent.count()).toBe(eventsBefore + ids.length);
  });

  it("adds comments (201) that show on the file and in the thread, and refuses empty ones", async () => {
    const id = (await technician.get("/api/files?q=harbourmaster")).body.items[0].id;
    const made = await technician.post(`/api/files/${id}/comments`).set(CSRF_HEADER, "1").send({ body: "  Dropout at 3:12 matches a splice on the reel.  " });
    expect(made.status).toBe(201);
    expect(made.body).toMatchObject({ body: "Dropout at 3:12 matches a splice on the reel.", author: { email: expect.stringContaining("technician") } });
    const thread = (await supervisor.get(`/api/files/${id}/comments`)).body;
    expect(thread.map((c: { id: number }) => c.id)).toEqual([made.body.id]);
    const detail = (await supervisor.get(`/api/files/${id}`)).body;
    expect(detail.comments[0].id).toBe(made.body.id);
    expect(detail.findings[0]).toMatchObject({ code: "dropout", severity: "fail", channel: 0, startSeconds: 1.5 });
    expect(detail.sizeBytes).toBe(1234567);
    expect(detail.spectrogramUrl).toBeNull();
    const empty = await technician.post(`/api/files/${id}/comments`).set(CSRF_HEADER, "1").send({ body: "   " });
    expect(empty.status).toBe(400);
  });
});

describe("GET /api/audit", () => {
  it("filters by actor e-mail and by action prefix, newest first", async () => {
    const auditor = (await t.signIn("auditor")).agent;
    const reviews = (await auditor.get("/api/audit?action=file.review")).body;
    expect(reviews.total).toBeGreaterThan(1);
    const ids = reviews.items.map((a: { id: number }) => a.id);
    expect(ids).toEqual([...ids].sort((x: number, y: number) => y - x));
    const byPrefix = (await auditor.get("/api/audit?action=batch.")).body;
    expect(byPrefix.items.every((a: { action: string }) => a.action.startsWith("batch."))).toBe(true);
    const byActor = (await auditor.get("/api/audit?actor=supervisor")).body;
    expect(byActor.total).toBeGreaterThan(0);
    expect(byActor.items.every((a: { actor: { email: string } | null }) => a.actor?.email.includes("supervisor"))).toBe(true);
    expect((await auditor.get("/api/audit?actor=nobody-at-all")).body.total).toBe(0);
  });
});
