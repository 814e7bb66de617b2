/**
 * Issue #16, server half: the review artefacts (close-up PNGs, excerpts, level grid, loudness curve) on
 * both upload paths, stored and served (excerpts with HTTP range requests, RFC 9110 §14), the batch
 * overview, anchored comments and review reasons. Artefacts are hand-made (helpers/artefacts.ts): PNGs by
 * pngjs, the WAV excerpt by tests/fixtures/wavWriter.ts, the FLAC excerpt by Debian's `flac`.
 */
import { execFileSync } from "node:child_process";
import { existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import request from "supertest";
import type TestAgent from "supertest/lib/agent.js";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { CSRF_HEADER, type BatchOverviewDto, type FileDetailDto } from "@tidemark/shared/types/api";
import { AuditEntry, Batch, FileResult } from "../../server/src/models/index.ts";
import { sweepOrphanObjects } from "../../server/src/services/orphanSweep.ts";
import { excerptFlacBytes, excerptWavBytes, levelGridBytes, loudnessCurveBytes, PROFILE_LIMITS, reviewParts, reviewReport } from "./helpers/artefacts.ts";
import { finding, ingest, pngBytes, scanReport, type IngestPart } from "./helpers/reports.ts";
import { claimedJobs } from "./helpers/runs.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

function objectKeys(dir: string): string[] {
  if (!existsSync(dir)) return [];
  return readdirSync(dir, { recursive: true, withFileTypes: true })
    .filter((e) => e.isFile() && !e.name.startsWith("."))
    .map((e) => path.relative(dir, path.join(e.parentPath, e.name)).split(path.sep).join("/"))
    .sort();
}

/** supertest hands binary bodies back as Buffers only when asked to buffer them raw. */
const binary = (req: request.Test): request.Test =>
  req.buffer(true).parse((res, done) => {
    const chunks: Buffer[] = [];
    res.on("data", (c: Buffer) => chunks.push(c));
    res.on("end", () => done(null, Buffer.concat(chunks)));
  });

let t: TestApp;
let token: string;
let auditor: TestAgent;
let supervisor: TestAgent;
let technician: TestAgent;
const flac = excerptFlacBytes();
let n = 0;
const key = (): string => `review-${++n}`;

beforeAll(async () => {
  t = await startTestApp({ label: "review" });
  token = await t.tokenFor(await t.createUser("technician"));
  auditor = (await t.signIn("auditor")).agent;
  supervisor = (await t.signIn("supervisor")).agent;
  technician = (await t.signIn("technician")).agent;
});
afterAll(() => t.close());

async function uploadReview(paths: string[], batchKey = key()): Promise<{ batchId: number; files: FileResult[]; parts: IngestPart[] }> {
  const parts = paths.flatMap((_, i) => reviewParts(i, flac).parts);
  const res = await ingest(t.app, token, { collection: "Harbourside Review Reels", batchKey, report: reviewReport(paths.map((p) => ({ path: p }))), images: parts });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const files = await FileResult.findAll({ where: { batchId: res.body.batchId }, order: [["path", "ASC"]] });
  return { batchId: res.body.batchId, files, parts };
}

describe("upload and serving of review artefacts", () => {
  let file: FileResult;
  let detail: FileDetailDto;

  beforeAll(async () => {
    const { files } = await uploadReview(["pier/reel-01.wav", "pier/reel-02.wav"]);
    file = files[0];
    detail = (await auditor.get(`/api/files/${file.id}`)).body;
  });

  it("records every artefact's key on its own file, under the upload's folder", async () => {
    expect(file.closeups).toHaveLength(2);
    expect(file.artefactKeys).toHaveLength(8); // grid, curve, and 2 × (spectrogram, waveform, excerpt)
    const folder = file.spectrogramKey!.split("/").slice(0, 2).join("/");
    for (const k of file.artefactKeys) expect(k.startsWith(`${folder}/0-`), k).toBe(true);
    for (const k of [...file.artefactKeys, file.spectrogramKey!, file.waveformKey!]) expect(existsSync(path.join(t.objectsDir, k)), k).toBe(true);
    const batch = await Batch.findByPk(file.batchId);
    expect(batch!.profileLimits).toEqual(PROFILE_LIMITS);
  });

  it("describes close-ups, omissions, data URLs and the profile limits in the file detail (CONTRACT-16 §5)", () => {
    const ids = detail.findings.map((f) => f.id);
    expect(detail.closeups).toEqual([
      {
        index: 0,
        findingIds: [ids[0]],
        startSeconds: 10,
        endSeconds: 14.04,
        secondsPerColumn: 0.005,
        spectrogramUrl: `/api/files/${file.id}/closeups/0/spectrogram.png`,
        waveformUrl: `/api/files/${file.id}/closeups/0/waveform.png`,
        excerptUrl: `/api/files/${file.id}/closeups/0/excerpt`,
        excerptMediaType: "audio/flac",
      },
      expect.objectContaining({ index: 1, findingIds: [ids[1]], excerptMediaType: "audio/wav", excerptUrl: `/api/files/${file.id}/closeups/1/excerpt` }),
    ]);
    expect(detail.findings.map((f) => f.startSeconds)).toEqual([12, 30, 45]);
    expect(detail.closeupsOmitted).toEqual([{ findingId: ids[2], reason: "cap" }]);
    expect(detail.levelGridUrl).toBe(`/api/files/${file.id}/level-grid`);
    expect(detail.loudnessCurveUrl).toBe(`/api/files/${file.id}/loudness-curve`);
    expect(detail.profileLimits).toEqual(PROFILE_LIMITS);
  });

  it("serves the close-up PNGs, the excerpts and the JSON with their Content-Types to an auditor", async () => {
    const parts = reviewParts(0, flac);
    const bytesOf = (field: string, name: string) => parts.parts.find((p) => p.field === field && p.name === name)!.bytes;
    const cases: [string, string, Buffer][] = [
      [detail.closeups[0].spectrogramUrl, "image/png", bytesOf("closeupSpectrogram", "0.0.png")],
      [detail.closeups[0].waveformUrl, "image/png", bytesOf("closeupWaveform", "0.0.png")],
      [detail.closeups[1].spectrogramUrl, "image/png", bytesOf("closeupSpectrogram", "0.1.png")],
      [detail.closeups[0].excerptUrl!, "audio/flac", flac],
      [detail.closeups[1].excerptUrl!, "audio/wav", excerptWavBytes()],
      [detail.levelGridUrl!, "application/json", levelGridBytes()],
      [detail.loudnessCurveUrl!, "application/json", loudnessCurveBytes()],
    ];
    for (const [url, type, bytes] of cases) {
      const res = await binary(auditor.get(url));
      expect({ url, status: res.status, type: res.headers["content-type"] }).toEqual({ url, status: 200, type: expect.stringMatching(new RegExp(`^${type}`)) });
      expect(Buffer.compare(res.body as Buffer, bytes), url).toBe(0);
    }
    const excerpt = await binary(auditor.get(detail.closeups[0].excerptUrl!));
    expect(excerpt.headers["accept-ranges"]).toBe("bytes");
    expect(excerpt.headers["content-length"]).toBe(String(flac.length));
    const grid = await auditor.get(detail.levelGridUrl!);
    expect(grid.body.schema).toBe("tidemark.level-grid/1");
  });

  it("answers byte ranges per RFC 9110 §14: 206 with exactly those bytes and Content-Range, 416 when unsatisfiable", async () => {
    const wav = excerptWavBytes();
    const url = detail.closeups[1].excerptUrl!;
    const size = wav.length;
    // §14.1.2: first-last inclusive; "-N" the last N bytes; "N-" from N to the end.
    const cases: [string, number, number][] = [
      ["bytes=100-1099", 100, 1099],
      ["bytes=0-0", 0, 0],
      ["bytes=-500", size - 500, size - 1],
      [`bytes=${size - 44}-`, size - 44, size - 1],
      [`bytes=1000-${size + 5000}`, 1000, size - 1], // §14.1.2: a last-pos past the end means the end
    ];
    for (const [range, first, last] of cases) {
      const res = await binary(auditor.get(url).set("Range", range));
      expect({ range, status: res.status, contentRange: res.headers["content-range"] }).toEqual({ range, status: 206, contentRange: `bytes ${first}-${last}/${size}` });
      expect(res.headers["content-length"]).toBe(String(last - first + 1));
      expect(Buffer.compare(res.body as Buffer, wav.subarray(first, last + 1)), range).toBe(0);
    }
    // §15.5.17: 416 with Content-Range "bytes */complete-length".
    const beyond = await auditor.get(url).set("Range", `bytes=${size}-`);
    expect(beyond.status).toBe(416);
    expect(beyond.headers["content-range"]).toBe(`bytes */${size}`);
    expect(beyond.body.error.code).toBe("range_not_satisfiable");
    // §14.2: a malformed Range is ignored; several ranges may be answered with the whole object.
    for (const range of ["bytes=abc", "bytes=0-9,100-109"]) {
      const whole = await binary(auditor.get(url).set("Range", range));
      expect({ range, status: whole.status }).toEqual({ range, status: 200 });
      expect((whole.body as Buffer).length).toBe(size);
    }
    // §13.1.5 If-Range: the range only when the validator still matches.
    const etag = (await auditor.get(url)).headers.etag as string;
    expect((await auditor.get(url).set("Range", "bytes=0-9").set("If-Range", etag)).status).toBe(206);
    expect((await auditor.get(url).set("Range", "bytes=0-9").set("If-Range", '"something-else"')).status).toBe(200);
    // §13.1.2 If-None-Match: 304 for the current validator, the excerpt for another.
    expect((await auditor.get(url).set("If-None-Match", etag)).status).toBe(304);
    expect((await auditor.get(url).set("If-None-Match", '"something-else"')).status).toBe(200);
    // The FLAC excerpt seeks the same way.
    const flacPart = await binary(auditor.get(detail.closeups[0].excerptUrl!).set("Range", "bytes=0-3"));
    expect(flacPart.status).toBe(206);
    expect((flacPart.body as Buffer).toString("latin1")).toBe("fLaC");
  });

  it("serves a FLAC excerpt in ranges that, put together, Debian's ffmpeg decodes to the original samples", async () => {
    const url = detail.closeups[0].excerptUrl!;
    const cuts = [0, 1000, Math.floor(flac.length / 2), flac.length];
    const pieces: Buffer[] = [];
    for (let i = 0; i + 1 < cuts.length; i++) {
      const res = await binary(auditor.get(url).set("Range", `bytes=${cuts[i]}-${cuts[i + 1] - 1}`));
      expect(res.status).toBe(206);
      pieces.push(res.body as Buffer);
    }
    const dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "excerpt-"));
    try {
      const file = path.join(dir, "served.flac");
      writeFileSync(file, Buffer.concat(pieces));
      const pcm = execFileSync("ffmpeg", ["-v", "error", "-i", file, "-f", "s16le", "-acodec", "pcm_s16le", "-"], { maxBuffer: 16 * 1024 * 1024 });
      // The WAV fixture's data chunk follows a 44-byte canonical header (RIFF 12 + fmt 24 + data header 8).
      const wav = excerptWavBytes();
      expect(wav.toString("latin1", 36, 40)).toBe("data");
      expect(pcm.length).toBe(wav.length - 44);
      expect(Buffer.compare(pcm, wav.subarray(44))).toBe(0);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it("answers 404 for a close-up or artefact the file does not have, 400 for a bad index, 401 to anonymous", async () => {
    const plain = await ingest(t.app, token, { collection: "Harbourside Review Reels", batchKey: key(), report: scanReport([{ path: "plain.wav" }]) });
    const plainFile = await FileResult.findOne({ where: { batchId: plain.body.batchId } });
    const plainDetail = (await auditor.get(`/api/files/${plainFile!.id}`)).body as FileDetailDto;
    expect(plainDetail).toMatchObject({ closeups: [], closeupsOmitted: [], levelGridUrl: null, loudnessCurveUrl: null, profileLimits: null });
    for (const url of [`/api/files/${file.id}/closeups/7/spectrogram.png`, `/api/files/${plainFile!.id}/level-grid`, `/api/files/${plainFile!.id}/loudness-curve`, `/api/files/${plainFile!.id}/closeups/0/excerpt`]) {
      const res = await auditor.get(url);
      expect({ url, status: res.status, code: res.body.error?.code }).toEqual({ url, status: 404, code: "not_found" });
    }
    expect((await auditor.get(`/api/files/${file.id}/closeups/x/waveform.png`)).status).toBe(400);
    for (const url of [detail.closeups[0].spectrogramUrl, detail.closeups[0].waveformUrl, detail.closeups[0].excerptUrl!, detail.levelGridUrl!, detail.loudnessCurveUrl!, `/api/batches/${file.batchId}/overview`]) {
      expect((await request(t.app).get(url)).status, url).toBe(401);
    }
  });
});

describe("checks on artefact parts", () => {
  const report = () => reviewReport([{ path: "check.wav" }]);
  const gif = Buffer.from("GIF89a not a png at all");

  it("refuses wrong names, indexes, undeclared parts, duplicates and wrong magic, storing nothing", async () => {
    const before = objectKeys(t.objectsDir);
    const batchesBefore = await Batch.count();
    const plain = scanReport([{ path: "plain.wav" }]);
    const cases: [string, IngestPart[], number, string, object?][] = [
      ["PNG signature (ISO/IEC 15948 §5.2)", [{ field: "closeupSpectrogram", name: "0.0.png", bytes: gif }], 415, "wrong_file_type"],
      ["fLaC marker (RFC 9639)", [{ field: "excerpt", name: "0.0.flac", bytes: excerptWavBytes() }], 415, "wrong_file_type"],
      ["RIFF…WAVE (RIFF spec, Microsoft/IBM 1991)", [{ field: "excerpt", name: "0.1.wav", bytes: flac }], 415, "wrong_file_type"],
      ["JSON object (RFC 8259)", [{ field: "loudnessCurve", name: "0.json", bytes: pngBytes() }], 415, "wrong_file_type"],
      ["grid schema", [{ field: "levelGrid", name: "0.json", bytes: loudnessCurveBytes() }], 400, "bad_json"],
      ["curve schema", [{ field: "loudnessCurve", name: "0.json", bytes: levelGridBytes() }], 400, "bad_json"],
      ["not JSON", [{ field: "levelGrid", name: "0.json", bytes: Buffer.from("{not json") }], 400, "bad_json"],
      ["close-up name", [{ field: "closeupWaveform", name: "0.png", bytes: pngBytes() }], 400, "bad_part_name"],
      ["excerpt name", [{ field: "excerpt", name: "0.0.mp3", bytes: flac }], 400, "bad_part_name"],
      ["not a name", [{ field: "levelGrid", name: "grid.json", bytes: levelGridBytes() }], 400, "bad_part_name"],
      ["file index", [{ field: "levelGrid", name: "3.json", bytes: levelGridBytes() }], 400, "unknown_file_index"],
      ["close-up index", [{ field: "closeupSpectrogram", name: "0.5.png", bytes: pngBytes() }], 400, "unknown_closeup_index"],
      ["excerpt type", [{ field: "excerpt", name: "0.0.wav", bytes: excerptWavBytes() }], 400, "excerpt_type_mismatch"],
      ["undeclared grid", [{ field: "levelGrid", name: "0.json", bytes: levelGridBytes() }], 400, "unexpected_part", plain],
      ["undeclared close-up", [{ field: "closeupSpectrogram", name: "0.0.png", bytes: pngBytes() }], 400, "unknown_closeup_index", plain],
      [
        "duplicate",
        [
          { field: "closeupSpectrogram", name: "0.0.png", bytes: pngBytes() },
          { field: "closeupSpectrogram", name: "0.0.png", bytes: pngBytes() },
        ],
        400,
        "duplicate_part",
      ],
    ];
    for (const [what, images, status, code, custom] of cases) {
      const res = await ingest(t.app, token, { collection: "C", batchKey: key(), report: (custom as ReturnType<typeof report>) ?? report(), images });
      expect({ what, status: res.status, code: res.body.error?.code }).toEqual({ what, status, code });
    }
    expect(await Batch.count()).toBe(batchesBefore);
    expect(objectKeys(t.objectsDir)).toEqual(before);
  });

  it("applies each kind's size cap from the settings (413)", async () => {
    const small = t.makeApp({ upload: { maxReportBytes: 200_000, maxImageBytes: 50_000, maxJsonPartBytes: 100, maxExcerptBytes: 1000, maxImages: 20 } });
    const grid = await ingest(small, token, { collection: "C", batchKey: key(), report: report(), images: [{ field: "levelGrid", name: "0.json", bytes: levelGridBytes() }] });
    expect(grid.status).toBe(413);
    expect(grid.body.error.message).toContain("100 bytes");
    const excerpt = await ingest(small, token, { collection: "C", batchKey: key(), report: report(), images: [{ field: "excerpt", name: "0.1.wav", bytes: excerptWavBytes() }] });
    expect(excerpt.status).toBe(413);
    const png = await ingest(small, token, { collection: "C", batchKey: key(), report: report(), images: [{ field: "closeupSpectrogram", name: "0.0.png", bytes: pngBytes() }, { field: "closeupWaveform", name: "0.0.png", bytes: pngBytes() }] });
    expect(png.status).toBe(201);
  });

  it("refuses a report whose close-ups point at findings it does not have (422)", async () => {
    const bad = reviewReport([{ path: "bad.wav" }]);
    bad.files[0].closeups![0].findings = [9];
    const res = await ingest(t.app, token, { collection: "C", batchKey: key(), report: bad });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toContain("files.0.closeups.0.findings");
  });

  it("still takes a tidemark.report/1 report without any of the new fields", async () => {
    const res = await ingest(t.app, token, { collection: "C", batchKey: key(), report: scanReport([{ path: "old.wav" }]) });
    expect(res.status).toBe(201);
  });
});

describe("the worker's job result carries the same parts", () => {
  it("stores and serves a one-file result's close-ups, and checks its parts as ingest does", async () => {
    const [job, other] = await claimedJobs(t.app, token, 2, "review-worker");
    const post = (j: typeof job, parts: IngestPart[]) => {
      const one = { ...reviewReport([{ path: j.path }]) };
      let req = request(t.app)
        .post(`/api/jobs/${j.id}/result`)
        .set("Authorization", `Bearer ${token}`)
        .field("attempt", String(j.attempt))
        .field("worker", "review-worker")
        .attach("report", Buffer.from(JSON.stringify(one)), { filename: "report.json", contentType: "application/json" });
      for (const p of parts) req = req.attach(p.field, p.bytes, { filename: p.name });
      return req;
    };
    const bad = await post(other, [{ field: "excerpt", name: "0.0.flac", bytes: pngBytes() }]);
    expect({ status: bad.status, code: bad.body.error.code }).toEqual({ status: 415, code: "wrong_file_type" });

    const res = await post(job, reviewParts(0, flac).parts);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const detail = (await auditor.get(`/api/files/${res.body.fileResultId}`)).body as FileDetailDto;
    expect(detail.closeups.map((c) => c.excerptMediaType)).toEqual(["audio/flac", "audio/wav"]);
    expect(detail.profileLimits).toEqual(PROFILE_LIMITS);
    const part = await binary(auditor.get(detail.closeups[0].excerptUrl!).set("Range", "bytes=4-99"));
    expect(part.status).toBe(206);
    expect(Buffer.compare(part.body as Buffer, flac.subarray(4, 100))).toBe(0);
  });
});

describe("no orphans", () => {
  it("a repeated upload of the same batch stores nothing new and leaves no objects behind", async () => {
    const batchKey = key();
    const first = await uploadReview(["repeat/a.wav"], batchKey);
    const after = objectKeys(t.objectsDir);
    const again = await ingest(t.app, token, { collection: "Harbourside Review Reels", batchKey, report: reviewReport([{ path: "repeat/a.wav" }]), images: first.parts });
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ batchId: first.batchId, created: false });
    expect(objectKeys(t.objectsDir)).toEqual(after);
  });

  it("deleting a batch removes its rows and every object it stored, and nothing of other batches", async () => {
    const doomed = await uploadReview(["delete/a.wav", "delete/b.wav"]);
    const kept = await uploadReview(["delete/kept.wav"]);
    const doomedKeys = doomed.files.flatMap((f) => [...f.artefactKeys, f.spectrogramKey!, f.waveformKey!]);
    expect(doomedKeys).toHaveLength(20);
    const comment = await technician.post(`/api/files/${doomed.files[0].id}/comments`).set(CSRF_HEADER, "1").send({ body: "about to go", atSeconds: 1 });
    expect(comment.status).toBe(201);
    const before = objectKeys(t.objectsDir);
    for (const k of doomedKeys) expect(before).toContain(k);

    const { agent: admin } = await t.signIn("admin");
    expect((await supervisor.delete(`/api/batches/${doomed.batchId}`).set(CSRF_HEADER, "1")).status).toBe(403);
    const res = await admin.delete(`/api/batches/${doomed.batchId}`).set(CSRF_HEADER, "1");
    expect(res.status).toBe(204);
    expect(await Batch.findByPk(doomed.batchId)).toBeNull();
    expect(await FileResult.count({ where: { batchId: doomed.batchId } })).toBe(0);
    expect(objectKeys(t.objectsDir)).toEqual(before.filter((k) => !doomedKeys.includes(k)));
    for (const f of kept.files) for (const k of f.artefactKeys) expect(existsSync(path.join(t.objectsDir, k)), k).toBe(true);
    const audit = await AuditEntry.findOne({ where: { action: "batch.delete", targetId: String(doomed.batchId) } });
    expect(audit!.details).toMatchObject({ files: 2, objects: 20 });
    expect((await admin.delete(`/api/batches/${doomed.batchId}`).set(CSRF_HEADER, "1")).status).toBe(404);

    // A distributed run's batch keeps receiving results: refused.
    const [job] = await claimedJobs(t.app, token, 1, "delete-worker");
    const runBatch = (await auditor.get(`/api/runs/${job.runId}`)).body.batchId as number;
    const refused = await admin.delete(`/api/batches/${runBatch}`).set(CSRF_HEADER, "1");
    expect({ status: refused.status, code: refused.body.error?.code }).toEqual({ status: 409, code: "batch_has_run" });
  });

  it("the start-up sweep removes unreferenced artefacts and keeps every referenced one", async () => {
    const { files } = await uploadReview(["sweep/a.wav"]);
    const keep = [...files[0].artefactKeys, files[0].spectrogramKey!, files[0].waveformKey!];
    const stray = "images/0b6f4c1e-8f7a-4c3e-9a35-3f5c2f9b8e11/0-closeup-0-excerpt.flac";
    await t.store.put(stray, flac, "audio/flac");
    const { deleted } = await sweepOrphanObjects({ sequelize: t.db.sequelize, store: t.store, logger: t.logger }, -60_000);
    expect(deleted).toContain(stray);
    for (const k of keep) expect(deleted).not.toContain(k);
    const left = objectKeys(t.objectsDir);
    for (const k of keep) expect(left).toContain(k);
    expect(left).not.toContain(stray);
  });
});

describe("batch overview", () => {
  it("lists files most recent first with loudness and true peak, and counts findings per code over the whole batch", async () => {
    const specs = [
      { path: "ov/a.wav", verdict: "fail" as const, integratedLufs: -20.5, truePeakDbtp: 0.4, findings: [finding("clipping", "fail", 1), finding("clipping", "fail", 2), finding("hum", "warn", null)] },
      { path: "ov/b.wav", verdict: "warn" as const, integratedLufs: -23.1, truePeakDbtp: -1.5, findings: [finding("hum", "warn", null)] },
      { path: "ov/c.wav", verdict: "pass" as const, integratedLufs: null, truePeakDbtp: null, findings: [] },
    ];
    const report = { ...scanReport(specs), profile: { name: "preservation-master", limits: PROFILE_LIMITS } };
    const res = await ingest(t.app, token, { collection: "Overview Reels", batchKey: key(), report });
    expect(res.status).toBe(201);
    const overview = (await auditor.get(`/api/batches/${res.body.batchId}/overview`)).body as BatchOverviewDto;
    expect(overview.batchId).toBe(res.body.batchId);
    expect(overview.profileLimits).toEqual(PROFILE_LIMITS);
    const ids = overview.files.map((f) => f.id);
    expect(ids).toEqual([...ids].sort((a, b) => b - a));
    expect([...overview.files].sort((a, b) => a.path.localeCompare(b.path))).toEqual(
      specs.map((s) => ({ id: expect.any(Number), path: s.path, verdict: s.verdict, integratedLufs: s.integratedLufs, truePeakDbtp: s.truePeakDbtp })),
    );
    // Expected counts computed from the report itself: per (code, severity), distinct files and findings.
    const expected = new Map<string, { files: Set<string>; findings: number }>();
    for (const s of specs) for (const f of s.findings) {
      const k = `${f.code}/${f.severity}`;
      const entry = expected.get(k) ?? { files: new Set(), findings: 0 };
      entry.files.add(s.path);
      entry.findings++;
      expected.set(k, entry);
    }
    expect(overview.findingCounts.map((c) => [`${c.code}/${c.severity}`, c.files, c.findings]).sort()).toEqual(
      [...expected].map(([k, v]) => [k, v.files.size, v.findings]).sort(),
    );
    // Each count bar links to /files?batch=<id>&finding=<code>: that filter finds exactly those files.
    const hum = await auditor.get(`/api/files?batch=${res.body.batchId}&finding=hum&sort=path`);
    expect(hum.body.items.map((f: { path: string }) => f.path)).toEqual(["ov/a.wav", "ov/b.wav"]);
    expect((await auditor.get(`/api/batches/999999/overview`)).status).toBe(404);
  });
});

describe("anchored comments", () => {
  let fileId: number;
  beforeAll(async () => {
    const res = await ingest(t.app, token, { collection: "Comment Reels", batchKey: key(), report: scanReport([{ path: "c.wav", durationSeconds: 60 }]) });
    fileId = (await FileResult.findOne({ where: { batchId: res.body.batchId } }))!.id;
  });

  it("stores atSeconds and channel, returns them in the comment list and the file detail, and audits them", async () => {
    const res = await technician.post(`/api/files/${fileId}/comments`).set(CSRF_HEADER, "1").send({ body: "click here on the right", atSeconds: 12.345, channel: 1 });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ body: "click here on the right", atSeconds: 12.345, channel: 1 });
    const plain = await technician.post(`/api/files/${fileId}/comments`).set(CSRF_HEADER, "1").send({ body: "general note" });
    expect(plain.body).toMatchObject({ atSeconds: null, channel: null });
    const list = await auditor.get(`/api/files/${fileId}/comments`);
    expect(list.body.map((c: { atSeconds: number | null; channel: number | null }) => [c.atSeconds, c.channel])).toEqual([[12.345, 1], [null, null]]);
    const detail = await auditor.get(`/api/files/${fileId}`);
    expect(detail.body.comments[0]).toMatchObject({ atSeconds: 12.345, channel: 1 });
    const audit = await AuditEntry.findOne({ where: { action: "comment.create", targetId: String(fileId) }, order: [["id", "ASC"]] });
    expect(audit!.details).toMatchObject({ atSeconds: 12.345, channel: 1 });
  });

  it("refuses an anchor outside the file's duration or channels", async () => {
    const cases: [object, string][] = [
      [{ body: "late", atSeconds: 60.5 }, "at_seconds_out_of_range"],
      [{ body: "third channel", channel: 2 }, "channel_out_of_range"],
      [{ body: "negative", atSeconds: -1 }, "invalid_request"],
      [{ body: "fraction", channel: 0.5 }, "invalid_request"],
    ];
    for (const [body, code] of cases) {
      const res = await technician.post(`/api/files/${fileId}/comments`).set(CSRF_HEADER, "1").send(body);
      expect({ body, status: res.status, code: res.body.error?.code }).toEqual({ body, status: 400, code });
    }
    expect((await technician.post(`/api/files/${fileId}/comments`).set(CSRF_HEADER, "1").send({ body: "at the very end", atSeconds: 60 })).status).toBe(201);
  });
});

describe("review reasons", () => {
  it("needs a non-blank reason for flagged and retransfer (400 reason_required), not for accepted or pending", async () => {
    const res = await ingest(t.app, token, { collection: "Reason Reels", batchKey: key(), report: scanReport([{ path: "r1.wav" }, { path: "r2.wav" }]) });
    const ids = (await FileResult.findAll({ where: { batchId: res.body.batchId }, order: [["id", "ASC"]] })).map((f) => f.id);
    for (const body of [{ reviewState: "flagged" }, { reviewState: "retransfer", reason: "   " }]) {
      const r = await supervisor.patch(`/api/files/${ids[0]}`).set(CSRF_HEADER, "1").send(body);
      expect({ body, status: r.status, code: r.body.error?.code }).toEqual({ body, status: 400, code: "reason_required" });
    }
    const bulk = await supervisor.post("/api/files/review").set(CSRF_HEADER, "1").send({ ids, reviewState: "retransfer" });
    expect({ status: bulk.status, code: bulk.body.error?.code }).toEqual({ status: 400, code: "reason_required" });
    expect((await FileResult.findAll({ where: { id: ids } })).map((f) => f.reviewState)).toEqual(["pending", "pending"]);

    expect((await supervisor.patch(`/api/files/${ids[0]}`).set(CSRF_HEADER, "1").send({ reviewState: "accepted" })).status).toBe(200);
    expect((await supervisor.patch(`/api/files/${ids[0]}`).set(CSRF_HEADER, "1").send({ reviewState: "flagged", reason: "dropout at 12 s" })).status).toBe(200);
    const ok = await supervisor.post("/api/files/review").set(CSRF_HEADER, "1").send({ ids, reviewState: "retransfer", reason: "both reels" });
    expect(ok.status).toBe(200);
    expect(ok.body.changed).toBe(2);
  });
});
