/**
 * File names that are not UTF-8 (issue #17) through the server: two look-alike paths told apart by pathBytes
 * are two files, each with its own fixity history, and the bytes come back in the file detail and the batch
 * export. The bytes are Latin-1 "café.wav" and "cafè.wav" (0xE9, 0xE8), base64 per RFC 4648.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { FileResult } from "../../server/src/models/index.ts";
import { fileReport, ingest, scanReport, sha } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

let t: TestApp;
let token: string;
const E9 = Buffer.from([0x63, 0x61, 0x66, 0xe9, 0x2e, 0x77, 0x61, 0x76]).toString("base64");
const E8 = Buffer.from([0x63, 0x61, 0x66, 0xe8, 0x2e, 0x77, 0x61, 0x76]).toString("base64");
const SHOWN = "caf\uFFFD.wav";

function lookAlikes(shaE9: string, shaE8: string) {
  const report = scanReport([{ path: SHOWN }, { path: SHOWN }]);
  report.files = [
    { ...fileReport({ path: SHOWN, sha256: shaE9 }), pathBytes: E9 },
    { ...fileReport({ path: SHOWN, sha256: shaE8 }), pathBytes: E8 },
  ];
  return report;
}

beforeAll(async () => {
  t = await startTestApp({ label: "path-bytes" });
  token = await t.tokenFor(await t.createUser("technician"));
});
afterAll(() => t.close());

describe("paths that are not UTF-8", () => {
  it("two look-alike names are two files; a later scan links and checks each against its own earlier scan", async () => {
    const first = await ingest(t.app, token, { collection: "Harbourside", batchKey: "pb-1", report: lookAlikes(sha("e9"), sha("e8")) });
    expect(first.status).toBe(201);
    const second = await ingest(t.app, token, { collection: "Harbourside", batchKey: "pb-2", report: lookAlikes(sha("e9"), sha("e8 changed")) });
    expect(second.status).toBe(201);
    const older = await FileResult.findAll({ where: { batchId: first.body.batchId } });
    const newer = await FileResult.findAll({ where: { batchId: second.body.batchId } });
    const by = (rows: FileResult[], bytes: string) => rows.find((r) => r.pathBytes === bytes)!;
    expect(newer.map((r) => r.path)).toEqual([SHOWN, SHOWN]);
    expect(by(newer, E9).previousId).toBe(by(older, E9).id);
    expect(by(newer, E8).previousId).toBe(by(older, E8).id);
    expect(by(newer, E9).findingCodes).not.toContain("fixity-changed");
    expect(by(newer, E8).findingCodes).toContain("fixity-changed");

    const { agent } = await t.signIn("auditor");
    const detail = await agent.get(`/api/files/${by(newer, E8).id}`);
    expect(detail.body).toMatchObject({ path: SHOWN, pathBytes: E8 });
    const exported = await agent.get(`/api/exports/batches/${second.body.batchId}.json`);
    expect(exported.status).toBe(200);
    const files = exported.body.files as { path: string; pathBytes?: string }[];
    expect(files.map((f) => f.pathBytes).sort()).toEqual([E8, E9].sort());
  });

  it("the Files search finds names shown with U+FFFD, and ignores case beyond ASCII as PostgreSQL's ILIKE does", async () => {
    const odd = await ingest(t.app, token, { collection: "Harbourside", batchKey: "pb-search", report: lookAlikes(sha("s9"), sha("s8")) });
    const accented = await ingest(t.app, token, { collection: "Harbourside", batchKey: "pb-accents", report: scanReport([{ path: "Rådhus/ÉTÉ-1979.wav" }, { path: "Rådhus/winter.wav" }]) });
    expect([odd.status, accented.status]).toEqual([201, 201]);
    const { agent } = await t.signIn("auditor");
    const search = async (batch: number, q: string): Promise<string[]> => {
      const res = await agent.get(`/api/files?batch=${batch}&sort=path&q=${encodeURIComponent(q)}`);
      expect(res.status, q).toBe(200);
      return (res.body.items as { path: string }[]).map((f) => f.path);
    };
    expect(await search(odd.body.batchId, "\uFFFD")).toEqual([SHOWN, SHOWN]);
    expect(await search(odd.body.batchId, "CAF\uFFFD.WAV")).toEqual([SHOWN, SHOWN]);
    expect(await search(odd.body.batchId, "cafe")).toEqual([]);
    expect(await search(accented.body.batchId, "été-1979")).toEqual(["Rådhus/ÉTÉ-1979.wav"]);
    expect(await search(accented.body.batchId, "RÅDHUS/")).toEqual(["Rådhus/winter.wav", "Rådhus/ÉTÉ-1979.wav"].sort());
  });

  it("the same path and the same bytes twice in one report is still a duplicate (422)", async () => {
    const report = lookAlikes(sha("a"), sha("b"));
    report.files[1].pathBytes = E9;
    const res = await ingest(t.app, token, { collection: "Harbourside", batchKey: "pb-dup", report });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/files\.1\.path duplicates files\.0\.path/);
  });
});
