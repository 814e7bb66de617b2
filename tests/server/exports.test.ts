/** Exports: CSV parsed back with csv-parse (an independent parser), the JSON batch, the PDF. */
import { parse } from "csv-parse/sync";
import type TestAgent from "supertest/lib/agent.js";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { CSRF_HEADER } from "@tidemark/shared/types/api";
import { CSV_COLUMNS, reportToCsv } from "@tidemark/shared/report/csvReport";
import { REPORT_SCHEMA_ID } from "@tidemark/shared/types/report";
import { finding, ingest, scanReport, sha } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

let t: TestApp;
let auditor: TestAgent;
let batchId: number;
let otherBatchId: number;

const binary = (res: { on: (e: string, f: (c?: Buffer) => void) => void }, done: (err: Error | null, body: Buffer) => void): void => {
  const chunks: Buffer[] = [];
  res.on("data", (c?: Buffer) => chunks.push(c!));
  res.on("end", () => done(null, Buffer.concat(chunks)));
};

beforeAll(async () => {
  t = await startTestApp({ label: "exports" });
  const token = await t.tokenFor(await t.createUser("technician"));
  const res = await ingest(t.app, token, {
    collection: "Ferry Terminal Interviews 1978",
    batchKey: "fti-export",
    report: scanReport([
      { path: "tape-01/foghorn, \"north\" pier.wav", verdict: "fail", integratedLufs: -14.25, truePeakDbtp: 0.5, findings: [finding("clipping", "fail"), finding("hum", "warn")] },
      { path: "=HYPERLINK(\"http://evil.example\").wav", verdict: "pass", integratedLufs: null },
      { path: "tape-02/ticket office.wav", verdict: "warn", sha256: sha("ticket") },
    ]),
  });
  batchId = res.body.batchId;
  otherBatchId = (await ingest(t.app, token, { collection: "Lighthouse Choir Reels", batchKey: "lcr-export", report: scanReport([{ path: "reel.wav" }]) })).body.batchId;
  auditor = (await t.signIn("auditor")).agent;
  const supervisor = (await t.signIn("supervisor")).agent;
  const hymn = (await supervisor.get(`/api/files?batch=${batchId}&q=foghorn`)).body.items[0];
  await supervisor.patch(`/api/files/${hymn.id}`).set(CSRF_HEADER, "1").send({ reviewState: "flagged", reason: "check the pier tape" });
  await supervisor.post(`/api/files/${hymn.id}/comments`).set(CSRF_HEADER, "1").send({ body: "Foghorn clips on both channels." });
});
afterAll(() => t.close());

describe("files.csv", () => {
  it("streams one row per file that csv-parse reads back, values intact", async () => {
    const res = await auditor.get("/api/exports/files.csv");
    expect(res.status).toBe(200);
    expect(res.headers["content-type"]).toMatch(/^text\/csv/);
    expect(res.headers["content-disposition"]).toMatch(/attachment; filename="tidemark-files-\d{4}-\d{2}-\d{2}\.csv"/);
    const rows = parse(res.text, { columns: true }) as Record<string, string>[];
    expect(rows).toHaveLength(4);
    const foghorn = rows.find((r) => r.path.startsWith("tape-01"))!;
    expect(foghorn).toMatchObject({
      path: 'tape-01/foghorn, "north" pier.wav',
      collection: "Ferry Terminal Interviews 1978",
      batch_key: "fti-export",
      verdict: "fail",
      review_state: "flagged",
      integrated_lufs: "-14.25",
      true_peak_dbtp: "0.5",
      sample_rate_hz: "96000",
      finding_codes: "clipping;hum",
    });
    expect(Number(foghorn.batch_id)).toBe(batchId);
    expect(Number(foghorn.file_result_id)).toBeGreaterThan(0);
    expect(rows.find((r) => r.path.includes("ticket"))!.sha256).toBe(sha("ticket"));
  });

  it("has the same columns, in the same order, as the CLI's --format csv", async () => {
    const server = (await auditor.get("/api/exports/files.csv")).text.split("\r\n")[0];
    const cli = reportToCsv({ schema: REPORT_SCHEMA_ID, tool: { name: "tidemark", version: "0" }, profile: { name: "access-copy" }, startedAt: "2026-01-15T10:00:00.000Z", finishedAt: "2026-01-15T10:00:01.000Z", summary: { files: 0, pass: 0, warn: 0, fail: 0, error: 0 }, files: [] }).split("\r\n")[0];
    expect(server).toBe(cli);
    expect(server.split(",")).toEqual([...CSV_COLUMNS]);
  });

  it("defuses spreadsheet formulas in text cells (OWASP CSV injection) but keeps negative numbers", async () => {
    const rows = parse((await auditor.get("/api/exports/files.csv")).text, { columns: true }) as Record<string, string>[];
    expect(rows.some((r) => r.path === `'=HYPERLINK("http://evil.example").wav`)).toBe(true);
    expect(rows.find((r) => r.path.startsWith("tape-01"))!.integrated_lufs).toBe("-14.25");
  });

  it("filters by collection and scan date", async () => {
    const collections = (await auditor.get("/api/collections")).body as { id: number; name: string }[];
    const choir = collections.find((c) => c.name === "Lighthouse Choir Reels")!;
    const rows = parse((await auditor.get(`/api/exports/files.csv?collection=${choir.id}`)).text, { columns: true }) as Record<string, string>[];
    expect(rows.map((r) => Number(r.batch_id))).toEqual([otherBatchId]);
    const none = parse((await auditor.get("/api/exports/files.csv?from=2027-01-01")).text, { columns: true });
    expect(none).toEqual([]);
    expect((await auditor.get("/api/exports/files.csv?from=yesterday")).status).toBe(400);
  });
});

describe("batch exports", () => {
  it("JSON has the batch, every file with findings, review events and comments", async () => {
    const res = await auditor.get(`/api/exports/batches/${batchId}.json`);
    expect(res.status).toBe(200);
    expect(res.headers["content-disposition"]).toContain(`tidemark-batch-${batchId}.json`);
    expect(res.body.schema).toBe("tidemark.batch-export/1");
    expect(res.body.batch).toMatchObject({ id: batchId, batchKey: "fti-export", counts: { files: 3, fail: 1, warn: 1, pass: 1 } });
    const foghorn = res.body.files.find((f: { path: string }) => f.path.startsWith("tape-01"));
    expect(foghorn.findings.map((f: { code: string }) => f.code)).toEqual(["clipping", "hum"]);
    expect(foghorn.reviewEvents[0]).toMatchObject({ toState: "flagged", reason: "check the pier tape" });
    expect(foghorn.comments[0].body).toBe("Foghorn clips on both channels.");
    expect(foghorn.metrics.integratedLufs).toBe(-14.25);
  });

  it("PDF is a PDF (starts with %PDF-, ends with %%EOF) and names the batch", async () => {
    const res = await auditor.get(`/api/exports/batches/${batchId}.pdf`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers["content-type"]).toBe("application/pdf");
    const pdf = res.body as Buffer;
    // ISO 32000-1 §7.5.2 header and §7.5.5 trailer.
    expect(pdf.subarray(0, 5).toString("latin1")).toBe("%PDF-");
    expect(pdf.subarray(-8).toString("latin1")).toContain("%%EOF");
    expect(pdf.length).toBeGreaterThan(2000);
    expect(pdf.toString("latin1")).toContain("Tidemark batch fti-export");
  });

  it("answers 404 for a batch that does not exist, in JSON", async () => {
    const res = await auditor.get("/api/exports/batches/424242.pdf");
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe("not_found");
  });
});

describe("audit.csv", () => {
  it("has the trail with actors, actions and request ids", async () => {
    const res = await auditor.get("/api/exports/audit.csv?action=file.review");
    const rows = parse(res.text, { columns: true }) as Record<string, string>[];
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ action: "file.review", target_type: "file" });
    expect(rows[0].actor_email).toContain("supervisor");
    expect(JSON.parse(rows[0].details)).toMatchObject({ from: "pending", to: "flagged" });
    expect(rows[0].request_id).toMatch(/^[0-9a-f-]{36}$/);
    const all = parse((await auditor.get("/api/exports/audit.csv")).text, { columns: true }) as Record<string, string>[];
    expect(all.map((r) => r.action)).toEqual(expect.arrayContaining(["batch.ingest", "collection.create", "session.sign_in", "comment.create"]));
  });
});
