/**
 * Duplicate transfers through the real ingest (issue #11) on real PostgreSQL: fingerprints of
 * synthesised programmes are carried in reports as the CLI writes them. Two batches in two collections
 * hold an original, its copy (trimmed by 10 s, white noise at 20 dB SNR, resampled to 44.1 kHz by sox)
 * and unrelated files; links, findings, both directions, the audit trail, re-scans and the lookup
 * endpoint are checked against what the signals were made to be.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { encodeFingerprint, FINGERPRINT_VERSION, type Fingerprint } from "@tidemark/shared/fingerprint/index";
import type { DuplicateListDto, FingerprintLookupDto } from "@tidemark/shared/types/api";
import type { ScanReport } from "@tidemark/shared/types/report";
import { QueryTypes } from "sequelize";
import { AuditEntry, FileResult, Finding } from "../../server/src/models/index.ts";
import { fingerprintOf, programme, soxMono, withNoise } from "../fixtures/fingerprintSignals.ts";
import { gainDb } from "../fixtures/synth.ts";
import { ingest, scanReport } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

const RATE = 48000;
const SECONDS = 40;
const OFFSET_TOLERANCE_SECONDS = 0.1; // issue #11

let t: TestApp;
let token: string;
const fps: Record<string, Fingerprint> = {};

/** A report whose files carry these fingerprints (null: scanned without one). */
function reportWith(files: { path: string; fp: Fingerprint | string | null; verdict?: "pass" | "warn" }[]): ScanReport {
  const report = scanReport(files.map((f) => ({ path: f.path, verdict: f.verdict ?? "pass" })));
  files.forEach((f, i) => {
    report.files[i].fingerprint = f.fp === null ? null : typeof f.fp === "string" ? f.fp : encodeFingerprint(f.fp);
  });
  return report;
}

async function upload(collection: string, batchKey: string, report: ScanReport) {
  const res = await ingest(t.app, token, { collection, batchKey, report });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const files = await FileResult.findAll({ where: { batchId: res.body.batchId }, order: [["id", "ASC"]] });
  return { batchId: res.body.batchId as number, id: (path: string) => files.find((f) => f.path === path)!.id };
}

const linkCount = async (): Promise<number> =>
  Number((await t.db.sequelize.query<{ n: string }>(`select count(*) n from duplicate_links`, { type: QueryTypes.SELECT }))[0].n);

let admin: Awaited<ReturnType<TestApp["signIn"]>>["agent"];
let batch1: Awaited<ReturnType<typeof upload>>;
let batch2: Awaited<ReturnType<typeof upload>>;

beforeAll(async () => {
  t = await startTestApp({ label: "duplicates" });
  token = await t.tokenFor(await t.createUser("technician"));
  admin = (await t.signIn("admin")).agent;
  const original = programme({ seed: 1, seconds: SECONDS, sampleRateHz: RATE });
  fps.original = fingerprintOf([original], RATE);
  // Trimmed by 10 s, noise at 20 dB SNR, then resampled to 44.1 kHz by sox (not by our resampler).
  const copy = soxMono(withNoise(original.subarray(10 * RATE), RATE, 20, 77), RATE, ["rate", "-v", "44100"]);
  fps.copy = fingerprintOf([copy], 44100);
  fps.unrelatedA = fingerprintOf([programme({ seed: 300, seconds: SECONDS, sampleRateHz: 16000 })], 16000);
  fps.unrelatedB = fingerprintOf([programme({ seed: 301, seconds: SECONDS, sampleRateHz: 16000 })], 16000);
  const second = programme({ seed: 2, seconds: 20, sampleRateHz: RATE });
  fps.second = fingerprintOf([second], RATE);
  fps.secondLouder = fingerprintOf([gainDb(second, 6)], RATE);

  batch1 = await upload("Lighthouse Choir Reels", "dup-1", reportWith([
    { path: "reel-01/side-a.wav", fp: fps.original },
    { path: "reel-02/side-a.wav", fp: fps.unrelatedA },
  ]));
  batch2 = await upload("Ferry Terminal Interviews 1978", "dup-2", reportWith([
    { path: "tape-17.wav", fp: fps.copy, verdict: "warn" },
    { path: "tape-18.wav", fp: fps.unrelatedB },
    { path: "tape-19.wav", fp: null },
  ]));
}, 120_000);
afterAll(() => t.close());

describe("ingest links copies across batches", () => {
  it("records one link, from the copy to the original, with the right offset and a score", async () => {
    const rows = await t.db.sequelize.query<{ file_result_id: number; other_file_result_id: number; score: number; offset_seconds: number; fingerprint_version: number }>(
      `select file_result_id, other_file_result_id, score, offset_seconds, fingerprint_version from duplicate_links`,
      { type: QueryTypes.SELECT },
    );
    expect(rows).toHaveLength(1);
    const [link] = rows;
    expect(link.file_result_id).toBe(batch2.id("tape-17.wav"));
    expect(link.other_file_result_id).toBe(batch1.id("reel-01/side-a.wav"));
    expect(Math.abs(link.offset_seconds - 10)).toBeLessThanOrEqual(OFFSET_TOLERANCE_SECONDS);
    expect(link.score).toBeGreaterThan(0.3 * fps.copy.hashes.length);
    expect(link.fingerprint_version).toBe(FINGERPRINT_VERSION);
  });

  it("puts an info possible-duplicate finding on the new file naming the other one, and keeps its verdict", async () => {
    const copy = await FileResult.findByPk(batch2.id("tape-17.wav"));
    expect(copy!.verdict).toBe("warn");
    const findings = await Finding.findAll({ where: { fileResultId: copy!.id, code: "possible-duplicate" } });
    expect(findings).toHaveLength(1);
    expect(findings[0].severity).toBe("info");
    expect(findings[0].message).toContain('"reel-01/side-a.wav" in Lighthouse Choir Reels');
    expect(findings[0].message).toContain(`file result ${batch1.id("reel-01/side-a.wav")}`);
    expect(findings[0].message).toMatch(/offset \+(9\.9|10\.0|10\.1)\d s/);
    // The list columns follow, so the Files filter finds it.
    expect(copy!.findingCodes).toContain("possible-duplicate");
    expect(copy!.worstFindings).toContainEqual({ code: "possible-duplicate", severity: "info", count: 1 });
    for (const path of ["tape-18.wav", "tape-19.wav"]) {
      expect(await Finding.count({ where: { fileResultId: batch2.id(path), code: "possible-duplicate" } })).toBe(0);
    }
    expect(await Finding.count({ where: { fileResultId: batch1.id("reel-01/side-a.wav") } })).toBe(0);
  });

  it("shows the link from both files, with the offset seen from each", async () => {
    const fromCopy = (await admin.get(`/api/files/${batch2.id("tape-17.wav")}/duplicates`)).body as DuplicateListDto;
    expect(fromCopy.hasFingerprint).toBe(true);
    expect(fromCopy.items).toHaveLength(1);
    expect(fromCopy.items[0]).toMatchObject({
      fileResultId: batch1.id("reel-01/side-a.wav"),
      batchId: batch1.batchId,
      path: "reel-01/side-a.wav",
      collection: { name: "Lighthouse Choir Reels" },
    });
    expect(fromCopy.items[0].offsetSeconds).toBeCloseTo(10, 0);

    const fromOriginal = (await admin.get(`/api/files/${batch1.id("reel-01/side-a.wav")}/duplicates`)).body as DuplicateListDto;
    expect(fromOriginal.items.map((m) => m.path)).toEqual(["tape-17.wav"]);
    expect(fromOriginal.items[0].score).toBe(fromCopy.items[0].score);
    expect(fromOriginal.items[0].offsetSeconds).toBeCloseTo(-fromCopy.items[0].offsetSeconds, 6);

    for (const [path, has] of [["tape-18.wav", true], ["tape-19.wav", false]] as const) {
      const res = await admin.get(`/api/files/${batch2.id(path)}/duplicates`);
      expect(res.status).toBe(200);
      expect(res.body).toEqual({ items: [], hasFingerprint: has });
    }
    expect((await admin.get(`/api/files/999999/duplicates`)).status).toBe(404);
  });

  it("audits each link and counts the step in the batch's ingest entry", async () => {
    const entries = await AuditEntry.findAll({ where: { action: "file.possible_duplicate" } });
    expect(entries).toHaveLength(1);
    expect(entries[0].targetId).toBe(String(batch2.id("tape-17.wav")));
    expect(entries[0].details).toMatchObject({ otherFileResultId: batch1.id("reel-01/side-a.wav"), otherPath: "reel-01/side-a.wav" });
    const ingestEntry = await AuditEntry.findOne({ where: { action: "batch.ingest", targetId: String(batch2.batchId) } });
    expect(ingestEntry!.details).toMatchObject({ fingerprintsIndexed: 2, fingerprintsSkipped: 0, duplicateLinks: 1 });
  });
});

describe("ingest within a batch, re-scans and bad fingerprints", () => {
  it("links a copy to an earlier file of the same batch", async () => {
    const before = await linkCount();
    const b = await upload("Harbour Board Minutes", "dup-3", reportWith([
      { path: "minutes-1961.wav", fp: fps.second },
      { path: "minutes-1961-louder.wav", fp: fps.secondLouder },
    ]));
    expect(await linkCount()).toBe(before + 1);
    const list = (await admin.get(`/api/files/${b.id("minutes-1961-louder.wav")}/duplicates`)).body as DuplicateListDto;
    expect(list.items.map((m) => m.fileResultId)).toEqual([b.id("minutes-1961.wav")]);
    expect(Math.abs(list.items[0].offsetSeconds)).toBeLessThanOrEqual(OFFSET_TOLERANCE_SECONDS);
  });

  it("does not link a re-scan to its own earlier scan, and keeps only the latest scan in the index", async () => {
    const again = await upload("Lighthouse Choir Reels", "dup-1-rescan", reportWith([{ path: "reel-01/side-a.wav", fp: fps.original }]));
    // The copy elsewhere is found again; the earlier scan of the same path is not.
    const fromRescan = (await admin.get(`/api/files/${again.id("reel-01/side-a.wav")}/duplicates`)).body as DuplicateListDto;
    expect(fromRescan.items.map((m) => m.fileResultId)).toEqual([batch2.id("tape-17.wav")]);
    expect(Math.abs(fromRescan.items[0].offsetSeconds + 10)).toBeLessThanOrEqual(OFFSET_TOLERANCE_SECONDS);
    const rows = await t.db.sequelize.query<{ file_result_id: number; is_indexed: boolean; hashes: string }>(
      `select p.file_result_id, p.is_indexed, (select count(*) from fingerprint_hashes h where h.file_result_id = p.file_result_id) hashes
         from fingerprints p where p.file_result_id = any($1::int[]) order by 1`,
      { bind: [[batch1.id("reel-01/side-a.wav"), again.id("reel-01/side-a.wav")]], type: QueryTypes.SELECT },
    );
    expect(rows.map((r) => [r.is_indexed, Number(r.hashes)])).toEqual([
      [false, 0],
      [true, fps.original.hashes.length],
    ]);
    // The copy ingested later now finds the re-scan, not the retired scan.
    const later = await upload("Ferry Terminal Interviews 1978", "dup-4", reportWith([{ path: "tape-17-again.wav", fp: fps.copy }]));
    const list = (await admin.get(`/api/files/${later.id("tape-17-again.wav")}/duplicates`)).body as DuplicateListDto;
    // Best first: the identical fingerprint of the first copy, then the re-scan of the original.
    expect(list.items.map((m) => m.fileResultId)).toEqual([batch2.id("tape-17.wav"), again.id("reel-01/side-a.wav")]);
  });

  it("drops a deleted file's fingerprint, hashes and links with it", async () => {
    const b = await upload("Harbour Board Minutes", "dup-delete", reportWith([{ path: "minutes-1962.wav", fp: fps.secondLouder }]));
    const id = b.id("minutes-1962.wav");
    const count = async (sql: string): Promise<number> =>
      Number((await t.db.sequelize.query<{ n: string }>(sql, { bind: [id], type: QueryTypes.SELECT }))[0].n);
    const hashes = `select count(*) n from fingerprint_hashes where file_result_id = $1`;
    const links = `select count(*) n from duplicate_links where file_result_id = $1 or other_file_result_id = $1`;
    expect(await count(hashes)).toBe(fps.secondLouder.hashes.length);
    expect(await count(links)).toBe(2); // the two minutes-1961 files
    await t.db.sequelize.query(`delete from file_results where id = $1`, { bind: [id] });
    expect(await count(hashes)).toBe(0);
    expect(await count(links)).toBe(0);
    expect(await count(`select count(*) n from fingerprints where file_result_id = $1`)).toBe(0);
  });

  it("refuses a damaged fingerprint with 422 naming the file, and stores nothing", async () => {
    const before = await FileResult.count();
    const damaged = encodeFingerprint(fps.unrelatedA).slice(0, 200);
    const res = await ingest(t.app, token, { collection: "C", batchKey: "dup-bad", report: reportWith([{ path: "x.wav", fp: damaged }]) });
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe("invalid_fingerprint");
    expect(res.body.error.message).toContain("files.0.fingerprint (x.wav)");
    expect(await FileResult.count()).toBe(before);
  });

  it("skips a fingerprint of another version instead of comparing it", async () => {
    const other = encodeFingerprint({ ...fps.original, version: FINGERPRINT_VERSION + 1, times: fps.original.times.map((x) => x + 0.001) });
    const before = await linkCount();
    const b = await upload("Lighthouse Choir Reels", "dup-future", reportWith([{ path: "from-a-newer-cli.wav", fp: other }]));
    expect(await linkCount()).toBe(before);
    const entry = await AuditEntry.findOne({ where: { action: "batch.ingest", targetId: String(b.batchId) } });
    expect(entry!.details).toMatchObject({ fingerprintsIndexed: 0, fingerprintsSkipped: 1 });
    expect((await admin.get(`/api/files/${b.id("from-a-newer-cli.wav")}/duplicates`)).body.hasFingerprint).toBe(false);
  });
});

describe("POST /api/duplicates/lookup", () => {
  const lookup = (body: string, query = "") =>
    request(t.app).post(`/api/duplicates/lookup${query}`).set("Authorization", `Bearer ${token}`).set("content-type", "text/plain").send(body);

  it("finds the indexed files holding a fingerprint's audio, best first, and nothing for an unrelated one", async () => {
    const res = await lookup(encodeFingerprint(fps.copy));
    expect(res.status).toBe(200);
    const { matches } = res.body as FingerprintLookupDto;
    // The re-scan of the original and the two indexed scans of the copy itself.
    expect(matches.map((m) => m.path).sort()).toEqual(["reel-01/side-a.wav", "tape-17-again.wav", "tape-17.wav"]);
    const original = matches.find((m) => m.path === "reel-01/side-a.wav")!;
    expect(Math.abs(original.offsetSeconds - 10)).toBeLessThanOrEqual(OFFSET_TOLERANCE_SECONDS);
    for (let i = 1; i < matches.length; i++) expect(matches[i].score).toBeLessThanOrEqual(matches[i - 1].score);
    expect(((await lookup(encodeFingerprint(fps.copy), "?limit=1")).body as FingerprintLookupDto).matches).toHaveLength(1);

    const unrelated = fingerprintOf([programme({ seed: 302, seconds: SECONDS, sampleRateHz: 16000 })], 16000);
    expect((await lookup(encodeFingerprint(unrelated))).body).toEqual({ matches: [] });
  });

  it("answers bad input with clear errors, and only to a token", async () => {
    const bad = await lookup("not a fingerprint!");
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe("invalid_fingerprint");
    expect((await lookup("")).status).toBe(400);
    const other = await lookup(encodeFingerprint({ ...fps.copy, version: 1, times: fps.copy.times.map((x) => x + 0.001) }));
    expect(other.status).toBe(422);
    expect(other.body.error.message).toMatch(new RegExp(`version 1, this server indexes version ${FINGERPRINT_VERSION}`));
    expect((await lookup(encodeFingerprint(fps.copy), "?limit=0")).status).toBe(400);
    const json = await request(t.app).post("/api/duplicates/lookup").set("Authorization", `Bearer ${token}`).send({ fingerprint: "x" });
    expect(json.status).toBe(400);
    const session = await admin.post("/api/duplicates/lookup").set("x-tidemark-request", "1").set("content-type", "text/plain").send(encodeFingerprint(fps.copy));
    expect(session.status).toBe(401);
    expect(session.body.error.code).toBe("token_required");
  });
});
