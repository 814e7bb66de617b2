/**
 * The demo seed against a listening server: the four Harbourside users, then batches made by really
 * running `tidemark scan --upload` on a freshly synthesised demo archive, then review activity; and a
 * second run on the now non-empty database does nothing.
 */
import type { AddressInfo } from "node:net";
import type { Server } from "node:http";
import path from "node:path";
import request from "supertest";
import { afterAll, beforeAll, expect, it } from "vitest";
import { Batch, Collection, Comment, FileResult, ReviewEvent, User } from "../../server/src/models/index.ts";
import { DEMO_USERS } from "../../server/src/seed/demoUsers.ts";
import { seedDemo, type SeedDemoResult } from "../../server/src/seed/seedDemo.ts";
import { readMailbox } from "./helpers/mailbox.ts";
import { startTestApp, TEST_SCRYPT_COST, type TestApp } from "./helpers/testApp.ts";

const PASSWORD = "harbourside-demo";
let t: TestApp;
let server: Server;
let baseUrl: string;
let result: SeedDemoResult;
const lines: string[] = [];

beforeAll(async () => {
  t = await startTestApp({ label: "seed" });
  server = await new Promise((resolve) => {
    const s = t.app.listen(0, "127.0.0.1", () => resolve(s));
  });
  baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  result = await seedDemo({
    baseUrl,
    password: PASSWORD,
    archiveDir: path.join(t.dir, "demo-archive"),
    passwordCost: TEST_SCRYPT_COST,
    log: (line) => lines.push(line),
  });
}, 240_000);

afterAll(async () => {
  await new Promise((r) => server.close(r));
  await t.close();
});

it("creates the four demo users, each able to sign in with the demo password", async () => {
  expect(result.seeded).toBe(true);
  const users = await User.findAll({ order: [["id", "ASC"]] });
  expect(users.map((u) => [u.email, u.role])).toEqual(DEMO_USERS.map((u) => [u.email, u.role]));
  for (const u of DEMO_USERS) {
    const res = await request(t.app).post("/api/session").send({ email: u.email, password: PASSWORD });
    expect(res.status, u.email).toBe(200);
  }
});

it("ingests one batch per demo collection, scanned and uploaded by the real CLI with the technician's token", async () => {
  expect(result.batchIds).toHaveLength(2);
  expect((await Collection.findAll({ order: [["name", "ASC"]] })).map((c) => c.name)).toEqual(["Ferry Terminal Interviews 1978", "Lighthouse Choir Reels"]);
  const technician = await User.findOne({ where: { email: "technician@harbourside.test" } });
  const batches = await Batch.findAll();
  expect(batches.every((b) => b.uploaderId === technician!.id && b.toolName === "tidemark")).toBe(true);
  const files = await FileResult.findAll();
  expect(files.length).toBeGreaterThanOrEqual(4);
  // The demo archive carries deliberate faults, and the CLI uploaded its spectrograms.
  expect(files.some((f) => f.verdict === "fail")).toBe(true);
  expect(files.some((f) => f.findingCodes.length > 0)).toBe(true);
  const withImage = files.find((f) => f.spectrogramKey);
  expect(withImage).toBeDefined();
  const agent = await t.signInAs("auditor@harbourside.test", PASSWORD);
  const png = await agent.get(`/api/files/${withImage!.id}/spectrogram.png`).buffer(true);
  expect(png.status).toBe(200);
  expect((png.body as Buffer).subarray(1, 4).toString("latin1")).toBe("PNG");
});

it("adds comments and review changes through the API, and e-mails the supervisor about failures", async () => {
  expect(await Comment.count()).toBeGreaterThanOrEqual(2);
  const states = (await ReviewEvent.findAll()).map((e) => e.toState);
  expect(states).toEqual(expect.arrayContaining(["retransfer", "flagged"]));
  await t.mailer.idle();
  const mail = readMailbox(path.join(t.dir, "mail"));
  expect(mail.some((m) => m.to.includes("supervisor@harbourside.test") && /failing file/.test(m.subject))).toBe(true);
});

it("does nothing on a database that already has users", async () => {
  const before = await Batch.count();
  const again = await seedDemo({ baseUrl, password: PASSWORD, archiveDir: path.join(t.dir, "demo-archive"), passwordCost: TEST_SCRYPT_COST });
  expect(again).toEqual({ seeded: false, batchIds: [] });
  expect(await Batch.count()).toBe(before);
});
