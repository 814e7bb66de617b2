/** POST /api/ingest: validation, idempotency, rollback, fixity across batches, images, e-mail. */
import { readdirSync, existsSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Batch, Collection, FileResult, Finding, AuditEntry } from "../../server/src/models/index.ts";
import type { ByteRange, ObjectStore } from "../../server/src/storage/ObjectStore.ts";
import { createFsStore } from "../../server/src/storage/fsStore.ts";
import { finding, ingest, pngBytes, scanReport, sha } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

function listFiles(dir: string): string[] {
  if (!existsSync(dir)) return [];
  return readdirSync(dir, { recursive: true, withFileTypes: true })
    .filter((e) => e.isFile())
    .map((e) => path.join(e.parentPath, e.name));
}

/** A store that fails on the n-th write, to prove earlier writes are cleaned up. */
function failingOnWrite(inner: ObjectStore, n: number): ObjectStore & { armed: boolean } {
  let writes = 0;
  const store = {
    armed: false,
    put: async (key: string, body: Buffer, type: string) => {
      if (store.armed && ++writes === n) throw new Error("disk full (simulated)");
      return inner.put(key, body, type);
    },
    get: (key: string, range?: ByteRange) => inner.get(key, range),
    size: (key: string) => inner.size(key),
    delete: (key: string) => inner.delete(key),
    list: (prefix: string) => inner.list(prefix),
  };
  return store;
}

let t: TestApp;
let token: string;
let store: ReturnType<typeof failingOnWrite>;

beforeAll(async () => {
  t = await startTestApp({
    label: "ingest",
    store: (dir) => (store = failingOnWrite(createFsStore(dir), 2)),
    settings: { upload: { maxReportBytes: 200_000, maxImageBytes: 50_000, maxJsonPartBytes: 50_000, maxExcerptBytes: 50_000, maxImages: 10 } },
  });
  token = await t.tokenFor(await t.createUser("technician"));
});
afterAll(() => t.close());

describe("validation", () => {
  it("refuses a report that breaks the contract with 422 naming the bad fields", async () => {
    const report = scanReport([{ path: "a.wav" }]) as unknown as { files: { sha256: string; verdict: string }[] };
    report.files[0].sha256 = "not-a-hash";
    report.files[0].verdict = "excellent";
    const res = await ingest(t.app, token, { collection: "C", batchKey: "bad-1", report: JSON.stringify(report) });
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe("invalid_report");
    expect(res.body.error.message).toContain("files.0.sha256");
    expect(res.body.error.message).toContain("files.0.verdict");
  });

  it("refuses JSON that does not parse with 400", async () => {
    const res = await ingest(t.app, token, { collection: "C", batchKey: "bad-2", report: "{ not json" });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("invalid_json");
  });

  it("refuses NUL characters PostgreSQL cannot store, with the field path (ASVS 4.0 V5.1.4)", async () => {
    const report = scanReport([{ path: "tape\u0000.wav" }]);
    const res = await ingest(t.app, token, { collection: "C", batchKey: "bad-nul", report });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("invalid_text");
    expect(res.body.error.message).toContain("files.0.path");
  });

  it("refuses a summary that disagrees with the files, and duplicate paths", async () => {
    const report = scanReport([{ path: "a.wav" }, { path: "a.wav" }]);
    const dup = await ingest(t.app, token, { collection: "C", batchKey: "bad-dup", report });
    expect(dup.status).toBe(422);
    expect(dup.body.error.message).toMatch(/files\.1\.path duplicates files\.0\.path/);
    const wrongCount = { ...scanReport([{ path: "a.wav" }]), summary: { files: 3, pass: 3, warn: 0, fail: 0, error: 0 } };
    const res = await ingest(t.app, token, { collection: "C", batchKey: "bad-sum", report: wrongCount });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/summary\.files/);
  });

  it("needs the report part, the text fields and multipart", async () => {
    const noReport = await ingest(t.app, token, { collection: "C", batchKey: "x" });
    expect(noReport.status).toBe(400);
    expect(noReport.body.error.code).toBe("missing_report");
    const noKey = await ingest(t.app, token, { collection: "C", report: scanReport([]) });
    expect(noKey.status).toBe(400);
    expect(noKey.body.error.message).toContain("batchKey");
    const json = await ingest(t.app, token, {}).set("content-type", "application/json").send({ report: {} });
    expect(json.status).toBe(415);
  });

  it("checks image names and indexes (400), PNG magic (415) and sizes (413)", async () => {
    const report = scanReport([{ path: "a.wav" }]);
    const cases: [string, Buffer, number, string][] = [
      ["../../etc/passwd", pngBytes(), 400, "bad_part_name"],
      ["7.png", pngBytes(), 400, "unknown_file_index"],
      ["0.png", Buffer.from("GIF89a not a png at all"), 415, "wrong_file_type"],
      ["0.png", Buffer.concat([pngBytes(), Buffer.alloc(60_000)]), 413, "payload_too_large"],
    ];
    for (const [name, bytes, status, code] of cases) {
      const res = await ingest(t.app, token, { collection: "C", batchKey: `img-${name}-${status}`, report, images: [{ field: "spectrogram", name, bytes }] });
      expect({ name, status: res.status, code: res.body.error?.code }).toEqual({ name, status, code });
    }
    const unexpected = await ingest(t.app, token, { collection: "C", batchKey: "img-field", report, images: [{ field: "thumbnail" as "waveform", name: "0.png", bytes: pngBytes() }] });
    expect(unexpected.status).toBe(400);
    const tooBig = await ingest(t.app, token, { collection: "C", batchKey: "big", report: JSON.stringify({ ...report, pad: "x".repeat(300_000) }) });
    expect(tooBig.status).toBe(413);
    expect(await Batch.count()).toBe(0);
    expect(listFiles(t.objectsDir)).toEqual([]);
    expect(listFiles(t.settings.uploadTmpDir!)).toEqual([]);
  });
});

describe("a good upload", () => {
  it("stores every row and image once, and a repeat returns the same batch (200) storing nothing new", async () => {
    const report = scanReport([
      { path: "reel-01/side-a.wav", verdict: "fail", findings: [finding("clipping", "fail"), finding("clipping", "fail", 9), finding("hum", "warn")] },
      { path: "reel-01/side-b.wav", verdict: "pass" },
    ]);
    const images = [
      { field: "spectrogram" as const, name: "0.png", bytes: pngBytes() },
      { field: "waveform" as const, name: "0.png", bytes: pngBytes(8, 2) },
      { field: "spectrogram" as const, name: "1.png", bytes: pngBytes() },
    ];
    const first = await ingest(t.app, token, { collection: "Lighthouse Choir Reels", batchKey: "day-1", report, images });
    expect(first.status).toBe(201);
    expect(first.body).toEqual({ batchId: expect.any(Number), created: true, files: 2 });
    const objectsAfterFirst = listFiles(t.objectsDir);
    expect(objectsAfterFirst).toHaveLength(3);

    const again = await ingest(t.app, token, { collection: "Lighthouse Choir Reels", batchKey: "day-1", report, images });
    expect(again.status).toBe(200);
    expect(again.body).toEqual({ batchId: first.body.batchId, created: false, files: 2 });
    expect(await Batch.count({ where: { batchKey: "day-1" } })).toBe(1);
    expect(await FileResult.count({ where: { batchId: first.body.batchId } })).toBe(2);
    expect(listFiles(t.objectsDir)).toEqual(objectsAfterFirst);

    const rows = await FileResult.findAll({ where: { batchId: first.body.batchId }, order: [["path", "ASC"]] });
    expect(rows[0].worstFindings).toEqual([
      { code: "clipping", severity: "fail", count: 2 },
      { code: "hum", severity: "warn", count: 1 },
    ]);
    expect(rows[0].findingCodes.sort()).toEqual(["clipping", "hum"]);
    expect(rows[0].spectrogramKey).toMatch(/^images\/[0-9a-f-]{36}\/0-spectrogram\.png$/);
    expect(rows[1].waveformKey).toBeNull();
    expect(await Finding.count({ where: { fileResultId: rows[0].id } })).toBe(3);

    const technicianView = await t.signIn("technician");
    const png = await technicianView.agent.get(`/api/files/${rows[0].id}/waveform.png`).buffer(true);
    expect(png.status).toBe(200);
    expect(png.headers["content-type"]).toBe("image/png");
    expect(Buffer.compare(png.body as Buffer, pngBytes(8, 2))).toBe(0);
    const missing = await technicianView.agent.get(`/api/files/${rows[1].id}/waveform.png`);
    expect(missing.status).toBe(404);
    expect(missing.body.error.code).toBe("not_found");
  });

  it("keys idempotency on the uploader: another uploader's same key is a new batch", async () => {
    const other = await t.tokenFor(await t.createUser("supervisor"));
    const report = scanReport([{ path: "x.wav" }]);
    const a = await ingest(t.app, token, { collection: "Shared", batchKey: "same-key", report });
    const b = await ingest(t.app, other, { collection: "Shared", batchKey: "same-key", report });
    expect([a.status, b.status]).toEqual([201, 201]);
    expect(a.body.batchId).not.toBe(b.body.batchId);
  });

  it("answers 409 naming what differs when a batch key comes back with other content or another collection", async () => {
    const report = scanReport([{ path: "key/a.wav" }, { path: "key/b.wav" }]);
    const first = await ingest(t.app, token, { collection: "Keys", batchKey: "reused", report });
    expect(first.status).toBe(201);
    const filesBefore = await FileResult.count();

    const otherFiles = scanReport([{ path: "key/a.wav" }, { path: "key/c.wav" }, { path: "key/d.wav" }]);
    const changed = await ingest(t.app, token, { collection: "Keys", batchKey: "reused", report: otherFiles });
    expect(changed.status).toBe(409);
    expect(changed.body.error.code).toBe("batch_key_conflict");
    expect(changed.body.error.message).toContain(`batch key "reused" was already used for batch ${first.body.batchId}`);
    expect(changed.body.error.message).toContain("file count: stored 2, this upload 3");
    expect(changed.body.error.message).toContain('files only in this upload: "key/c.wav", "key/d.wav"');
    expect(changed.body.error.message).toContain('files only in the stored batch: "key/b.wav"');

    const rehashed = scanReport([{ path: "key/a.wav", sha256: sha("new bytes") }, { path: "key/b.wav" }]);
    const hash = await ingest(t.app, token, { collection: "Keys", batchKey: "reused", report: rehashed });
    expect(hash.status).toBe(409);
    expect(hash.body.error.message).toContain('SHA-256 differs for "key/a.wav"');

    const trail = await AuditEntry.findAll({ where: { action: "batch.ingest_conflict", targetId: String(first.body.batchId) } });
    expect(trail).toHaveLength(2);
    expect(trail[0].details).toMatchObject({ batchKey: "reused", differences: expect.arrayContaining(["file count: stored 2, this upload 3"]) });

    const elsewhere = await ingest(t.app, token, { collection: "Other Shelf", batchKey: "reused", report });
    expect(elsewhere.status).toBe(409);
    expect(elsewhere.body.error.message).toContain('collection: stored in "Keys", this upload names "Other Shelf"');

    const same = await ingest(t.app, token, { collection: "Keys", batchKey: "reused", report });
    expect(same.status).toBe(200);
    expect(same.body).toEqual({ batchId: first.body.batchId, created: false, files: 2 });
    expect(await FileResult.count()).toBe(filesBefore);
    expect(await Collection.count({ where: { name: "Other Shelf" } })).toBe(0);
  });

  it("creates exactly one batch when the same upload races itself", async () => {
    const report = scanReport([{ path: "race.wav" }]);
    const results = await Promise.all(
      Array.from({ length: 4 }, () => ingest(t.app, token, { collection: "Race", batchKey: "race-1", report, images: [{ field: "spectrogram", name: "0.png", bytes: pngBytes() }] })),
    );
    expect(results.map((r) => r.status).sort()).toEqual([200, 200, 200, 201]);
    expect(new Set(results.map((r) => r.body.batchId)).size).toBe(1);
    expect(await Batch.count({ where: { batchKey: "race-1" } })).toBe(1);
    const keys = (await FileResult.findAll({ where: { batchId: results[0].body.batchId } })).map((f) => f.spectrogramKey);
    const objects = listFiles(t.objectsDir).filter((f) => f.includes(path.dirname(keys[0]!)));
    expect(objects).toHaveLength(1);
  });
});

describe("failure midway leaves nothing behind", () => {
  it("rolls back every row and deletes the images when PostgreSQL refuses a row mid-transaction", async () => {
    // A real constraint failure inside the transaction, after the batch and file rows went in.
    await t.db.sequelize.query(`alter table findings add constraint test_no_boom check (message <> 'boom')`);
    try {
      const before = { batches: await Batch.count(), files: await FileResult.count(), collections: await Collection.count(), audit: await AuditEntry.count() };
      const report = scanReport([
        { path: "ok.wav", findings: [finding("hum", "warn")] },
        { path: "bad.wav", verdict: "fail", findings: [{ ...finding("dropout", "fail"), message: "boom" }] },
      ]);
      const objectsBefore = listFiles(t.objectsDir);
      const res = await ingest(t.app, token, {
        collection: "Never Created",
        batchKey: "doomed",
        report,
        images: [
          { field: "spectrogram", name: "0.png", bytes: pngBytes() },
          { field: "spectrogram", name: "1.png", bytes: pngBytes() },
        ],
      });
      expect(res.status).toBe(500);
      expect(res.body.error.code).toBe("internal_error");
      expect(JSON.stringify(res.body)).not.toMatch(/at \w+ \(|\.ts:\d+/);
      expect(res.headers["x-request-id"]).toBeTruthy();
      expect(res.body.error.message).toContain(res.headers["x-request-id"]);
      const after = { batches: await Batch.count(), files: await FileResult.count(), collections: await Collection.count(), audit: await AuditEntry.count() };
      expect(after).toEqual(before);
      expect(listFiles(t.objectsDir)).toEqual(objectsBefore);
      expect(t.logger.errors.join("\n")).toContain("test_no_boom");
    } finally {
      await t.db.sequelize.query(`alter table findings drop constraint test_no_boom`);
    }
  });

  it("deletes the images already written when the object store fails on a later one", async () => {
    const objectsBefore = listFiles(t.objectsDir);
    store.armed = true;
    try {
      const res = await ingest(t.app, token, {
        collection: "C",
        batchKey: "store-fails",
        report: scanReport([{ path: "a.wav" }, { path: "b.wav" }]),
        images: [
          { field: "spectrogram", name: "0.png", bytes: pngBytes() },
          { field: "spectrogram", name: "1.png", bytes: pngBytes() },
        ],
      });
      expect(res.status).toBe(500);
    } finally {
      store.armed = false;
    }
    expect(listFiles(t.objectsDir)).toEqual(objectsBefore);
    expect(await Batch.count({ where: { batchKey: "store-fails" } })).toBe(0);
  });
});

describe("fixity", () => {
  it("links a path's later scan to its history and raises fixity-changed when the SHA-256 differs", async () => {
    const collection = "Ferry Terminal Interviews 1978";
    const first = await ingest(t.app, token, {
      collection,
      batchKey: "fx-1",
      report: scanReport([
        { path: "interviews/skipper.wav", sha256: sha("original") },
        { path: "interviews/ticket-office.wav", sha256: sha("stable") },
      ]),
    });
    const second = await ingest(t.app, token, {
      collection,
      batchKey: "fx-2",
      report: scanReport([
        { path: "interviews/skipper.wav", sha256: sha("altered"), verdict: "pass" },
        { path: "interviews/ticket-office.wav", sha256: sha("stable") },
      ]),
    });
    expect([first.status, second.status]).toEqual([201, 201]);
    const [oldSkipper] = await FileResult.findAll({ where: { batchId: first.body.batchId, path: "interviews/skipper.wav" } });
    const newer = await FileResult.findAll({ where: { batchId: second.body.batchId }, order: [["path", "ASC"]] });
    const [skipper, office] = newer;
    expect(skipper.previousId).toBe(oldSkipper.id);
    expect(skipper.verdict).toBe("fail");
    expect(skipper.findingCodes).toContain("fixity-changed");
    expect(office.findingCodes).not.toContain("fixity-changed");
    expect(office.verdict).toBe("pass");
    const batch = await Batch.findByPk(second.body.batchId);
    expect({ pass: batch!.passCount, fail: batch!.failCount }).toEqual({ pass: 1, fail: 1 });

    const audit = await AuditEntry.findAll({ where: { action: "file.fixity_changed", targetId: String(skipper.id) } });
    expect(audit).toHaveLength(1);
    expect(audit[0].details).toMatchObject({ previousSha256: sha("original"), sha256: sha("altered") });

    const { agent } = await t.signIn("auditor");
    const detail = await agent.get(`/api/files/${skipper.id}`);
    expect(detail.status).toBe(200);
    expect(detail.body.findings.find((f: { code: string }) => f.code === "fixity-changed")).toMatchObject({ severity: "fail" });
    expect(detail.body.fixityHistory.map((h: { fileResultId: number; changed: boolean }) => [h.fileResultId, h.changed])).toEqual([
      [oldSkipper.id, false],
      [skipper.id, true],
    ]);
    const listed = await agent.get(`/api/files?finding=fixity-changed&collection=${skipper.collectionId}`);
    expect(listed.body.items.map((f: { id: number }) => f.id)).toEqual([skipper.id]);
  });
});

describe("authentication", () => {
  it("takes tokens only: no token 401, a session 401 token_required, an auditor's token 403", async () => {
    const report = scanReport([{ path: "a.wav" }]);
    const anonymous = await ingest(t.app, null, { collection: "C", batchKey: "auth-1", report });
    expect(anonymous.status).toBe(401);
    const { agent } = await t.signIn("technician");
    const bySession = await agent.post("/api/ingest").set("x-tidemark-request", "1").field("collection", "C").field("batchKey", "auth-2").attach("report", Buffer.from(JSON.stringify(report)), "report.json");
    expect(bySession.status).toBe(401);
    expect(bySession.body.error.code).toBe("token_required");
    const demoted = await t.createUser("auditor");
    const auditorToken = await t.tokenFor(demoted);
    const byAuditor = await ingest(t.app, auditorToken, { collection: "C", batchKey: "auth-3", report });
    expect(byAuditor.status).toBe(403);
    expect(await Batch.count({ where: { batchKey: ["auth-1", "auth-2", "auth-3"] } })).toBe(0);
  });
});
