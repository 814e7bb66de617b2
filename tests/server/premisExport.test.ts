/**
 * PREMIS 3.0 exports per batch and per collection, validated with Debian's xmllint against the PREMIS 3.0
 * XML schema (Library of Congress, ../shared/reference/premis-v3-0.xsd), then read back with
 * fast-xml-parser (an independent parser) to check objects, SHA-256 fixity, fixity-check events and agents.
 * Also the whole-collection JSON export.
 */
import request from "supertest";
import type TestAgent from "supertest/lib/agent.js";
import { XMLParser } from "fast-xml-parser";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { validateWithXmllint } from "../helpers/xmlSchema.ts";
import { ingest, scanReport, sha } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

let t: TestApp;
let auditor: TestAgent;
let firstBatch: number;
let secondBatch: number;
let collectionId: number;
let tokenName: string;
const COLLECTION = "Harbourside Pier Recordings";

beforeAll(async () => {
  t = await startTestApp({ label: "premis" });
  const technician = await t.createUser("technician", { name: "Ivo Penhallow" });
  const token = await t.tokenFor(technician);
  firstBatch = (
    await ingest(t.app, token, {
      collection: COLLECTION,
      batchKey: "hpr-2026-01",
      report: scanReport([{ path: "reel-1.wav", sha256: sha("reel-1") }, { path: "reel-2.wav", sha256: sha("reel-2") }]),
    })
  ).body.batchId;
  // Second scan: reel-1 unchanged, reel-2 changed, reel-3 new.
  secondBatch = (
    await ingest(t.app, token, {
      collection: COLLECTION,
      batchKey: "hpr-2026-02",
      report: scanReport([{ path: "reel-1.wav", sha256: sha("reel-1") }, { path: "reel-2.wav", sha256: sha("reel-2 damaged") }, { path: "reel-3.wav", sha256: sha("reel-3") }]),
    })
  ).body.batchId;
  const verify = await request(t.app)
    .post("/api/fixity-checks")
    .set("Authorization", `Bearer ${token}`)
    .send({
      collection: COLLECTION,
      checkedAt: "2026-12-03T08:30:00.000Z",
      checks: [
        { path: "reel-1.wav", outcome: "unchanged", expectedSha256: sha("reel-1"), actualSha256: sha("reel-1"), movedTo: null, detail: "" },
        { path: "reel-3.wav", outcome: "missing", expectedSha256: sha("reel-3"), actualSha256: null, movedTo: null, detail: "" },
      ],
    });
  expect(verify.status, JSON.stringify(verify.body)).toBeLessThan(300);
  auditor = (await t.signIn("auditor")).agent;
  collectionId = ((await auditor.get("/api/collections")).body as { id: number; name: string }[]).find((c) => c.name === COLLECTION)!.id;
  const tokens = (await (await t.signIn("admin")).agent.get("/api/tokens?all=1")).body as { name: string; owner?: { name: string } }[];
  tokenName = tokens.find((k) => k.owner?.name === "Ivo Penhallow")!.name;
}, 60_000);
afterAll(() => t.close());

type Node = Record<string, unknown>;
const parser = new XMLParser({ ignoreAttributes: false, removeNSPrefix: true, isArray: (name) => ["object", "event", "agent", "linkingAgentIdentifier", "linkingEventIdentifier", "objectIdentifier"].includes(name) });
const premisOf = (xml: string) => (parser.parse(xml) as { premis: { object: Node[]; event: Node[]; agent: Node[] } }).premis;
const idValue = (n: Node, element: string): string => String(((n[element] as Node[] | Node) instanceof Array ? (n[element] as Node[])[0] : (n[element] as Node))[`${element}Value`]);

describe("PREMIS 3.0 per batch", () => {
  it("validates against the PREMIS 3.0 schema with xmllint", async () => {
    const res = await auditor.get(`/api/exports/batches/${secondBatch}.premis.xml`);
    expect(res.status).toBe(200);
    expect(res.headers["content-type"]).toMatch(/^application\/xml/);
    expect(res.headers["content-disposition"]).toContain(`tidemark-batch-${secondBatch}.premis.xml`);
    const { valid, output } = validateWithXmllint(res.text, "premis-v3-0.xsd");
    expect(valid, output).toBe(true);
    // The check can fail: the same document without its required <format> is rejected.
    const broken = res.text.replace(/<format>[\s\S]*?<\/format>/, "");
    expect(validateWithXmllint(broken, "premis-v3-0.xsd").valid).toBe(false);
  });

  it("has each file as an object with its SHA-256, and a fixity-check event per rescanned file with the right outcome", async () => {
    const premis = premisOf((await auditor.get(`/api/exports/batches/${secondBatch}.premis.xml`)).text);
    expect(premis.object.map((o) => o.originalName)).toEqual(["reel-1.wav", "reel-2.wav", "reel-3.wav"]);
    const fixity = (o: Node) => ((o.objectCharacteristics as Node).fixity as Node);
    expect(fixity(premis.object[1])).toMatchObject({ messageDigestAlgorithm: "SHA-256", messageDigest: sha("reel-2 damaged") });
    const scans = premis.event.filter((e) => idValue(e, "eventIdentifier").startsWith("scan:"));
    const outcome = (e: Node) => (e.eventOutcomeInformation as Node).eventOutcome;
    expect(scans.map((e) => [e.eventType, outcome(e)])).toEqual([
      ["fixity check", "pass"],
      ["fixity check", "fail"],
      ["message digest calculation", "success"],
    ]);
    expect(String(((scans[1].eventOutcomeInformation as Node).eventOutcomeDetail as Node).eventOutcomeDetailNote)).toContain(`was ${sha("reel-2")}`);
    // Agents: the scanning tool with its version and the uploading user.
    expect(premis.agent.map((a) => [a.agentName, a.agentType, a.agentVersion])).toEqual(
      expect.arrayContaining([
        ["tidemark", "software", "0.1.0-test"],
        [expect.stringContaining("Ivo Penhallow"), "person", undefined],
      ]),
    );
  });

  it("includes verify --upload checks of the batch's paths, with the token as an agent", async () => {
    const premis = premisOf((await auditor.get(`/api/exports/batches/${secondBatch}.premis.xml`)).text);
    const checks = premis.event.filter((e) => idValue(e, "eventIdentifier").startsWith("fixity-check:"));
    expect(checks.map((e) => [e.eventType, e.eventDateTime, (e.eventOutcomeInformation as Node).eventOutcome])).toEqual([
      ["fixity check", "2026-12-03T08:30:00.000Z", "pass"],
      ["fixity check", "2026-12-03T08:30:00.000Z", "fail"],
    ]);
    const roles = (checks[1].linkingAgentIdentifier as Node[]).map((l) => [String(l.linkingAgentIdentifierValue).split(":")[0], l.linkingAgentRole]);
    expect(roles).toEqual([["tool", "executing program"], ["user", "implementer"], ["token", "authorizer"]]);
    const token = premis.agent.find((a) => idValue(a, "agentIdentifier").startsWith("token:"))!;
    expect(token.agentName).toBe(`API token "${tokenName}"`);
    // Each event links back to the object it is about, and the object lists its events.
    const reel3 = premis.object.find((o) => o.originalName === "reel-3.wav")!;
    expect((reel3.linkingEventIdentifier as Node[]).map((l) => l.linkingEventIdentifierValue)).toEqual(expect.arrayContaining([idValue(checks[1], "eventIdentifier")]));
  });

  it("answers 404 for an unknown batch", async () => {
    expect((await auditor.get("/api/exports/batches/424242.premis.xml")).status).toBe(404);
  });
});

describe("PREMIS 3.0 per collection", () => {
  it("validates, has the latest scan of each path as its object and every scan and check as events", async () => {
    const res = await auditor.get(`/api/exports/collections/${collectionId}.premis.xml`);
    expect(res.status).toBe(200);
    const { valid, output } = validateWithXmllint(res.text, "premis-v3-0.xsd");
    expect(valid, output).toBe(true);
    const premis = premisOf(res.text);
    expect(premis.object.map((o) => [o.originalName, ((o.objectCharacteristics as Node).fixity as Node).messageDigest])).toEqual([
      ["reel-1.wav", sha("reel-1")],
      ["reel-2.wav", sha("reel-2 damaged")],
      ["reel-3.wav", sha("reel-3")],
    ]);
    // 2 first scans + 3 second scans + 2 verify checks.
    expect(premis.event).toHaveLength(7);
    expect(premis.event.filter((e) => e.eventType === "fixity check")).toHaveLength(4);
  });

  it("answers 404 for an unknown collection and 400 for a bad id", async () => {
    expect((await auditor.get("/api/exports/collections/424242.premis.xml")).status).toBe(404);
    expect((await auditor.get("/api/exports/collections/abc.premis.xml")).status).toBe(400);
  });
});

describe("whole-collection JSON", () => {
  it("streams every batch of the collection in the batch export's shape", async () => {
    const res = await auditor.get(`/api/exports/collections/${collectionId}.json`);
    expect(res.status).toBe(200);
    const body = JSON.parse(res.text) as { schema: string; collection: { name: string }; batches: { batch: { id: number }; files: { path: string; sha256: string }[] }[] };
    expect(body.schema).toBe("tidemark.collection-export/1");
    expect(body.collection.name).toBe(COLLECTION);
    expect(body.batches.map((b) => b.batch.id)).toEqual([firstBatch, secondBatch]);
    expect(body.batches[1].files.map((f) => f.path)).toEqual(["reel-1.wav", "reel-2.wav", "reel-3.wav"]);
  });
});

describe("batch search for the exports page (GET /api/batches?q=)", () => {
  type Page = { items: { id: number; batchKey: string }[]; total: number };
  const search = async (query: string): Promise<Page> => (await auditor.get(`/api/batches?${query}`)).body as Page;

  it("finds a batch by key, by number and by collection name, with paging", async () => {
    expect((await search("q=hpr-2026-02")).items.map((b) => b.id)).toEqual([secondBatch]);
    expect((await search(`q=%23${firstBatch}`)).items.map((b) => b.id)).toEqual([firstBatch]);
    const byCollection = await search("q=pier%20recordings&sort=startedAt&order=asc&pageSize=1&page=2");
    expect(byCollection.total).toBe(2);
    expect(byCollection.items.map((b) => b.id)).toEqual([secondBatch]);
    expect((await search("q=no-such-batch")).total).toBe(0);
    // LIKE wildcards are matched literally.
    expect((await search("q=%25")).total).toBe(0);
  });
});
