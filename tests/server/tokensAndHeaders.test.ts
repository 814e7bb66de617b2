/**
 * Issue #19 item 8: token expiry chosen at creation, a disabled user's tokens revoked for good, the CSV
 * formula guard with leading whitespace, Cache-Control: no-store on secret-bearing answers, and HSTS only
 * behind HTTPS.
 */
import { parse } from "csv-parse/sync";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { CSRF_HEADER } from "@tidemark/shared/types/api";
import { guardCsvText as safeText } from "@tidemark/shared/report/csvReport";
import { ApiToken, AuditEntry } from "../../server/src/models/index.ts";
import { ingest, scanReport } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp({ label: "tokhdr" });
});
afterAll(() => t.close());

const DAY_MS = 86_400_000;
const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

describe("token expiry (ASVS 4.0 V2.10 service authentication, from memory)", () => {
  it("is chosen at creation (default one year), shown in the list, and bounded", async () => {
    const { agent } = await t.signIn("technician");
    const byDefault = await agent.post("/api/tokens").set(CSRF_HEADER, "1").send({ name: "station-1" });
    expect(byDefault.status).toBe(201);
    expect(Date.parse(byDefault.body.expiresAt) - Date.now()).toBeGreaterThan(364 * DAY_MS);
    expect(Date.parse(byDefault.body.expiresAt) - Date.now()).toBeLessThan(366 * DAY_MS);
    const month = await agent.post("/api/tokens").set(CSRF_HEADER, "1").send({ name: "station-2", expiresInDays: 30 });
    expect(Math.round((Date.parse(month.body.expiresAt) - Date.now()) / DAY_MS)).toBe(30);
    const listed = (await agent.get("/api/tokens")).body as { id: string; expiresAt: string }[];
    expect(listed.find((x) => x.id === month.body.id)?.expiresAt).toBe(month.body.expiresAt);
    for (const expiresInDays of [0, 1826, 1.5, "365"]) {
      const res = await agent.post("/api/tokens").set(CSRF_HEADER, "1").send({ name: "bad", expiresInDays });
      expect({ expiresInDays, status: res.status }).toEqual({ expiresInDays, status: 400 });
    }
  });

  it("refuses a token once it has expired, with the same 401 as any invalid token", async () => {
    const user = await t.createUser("technician");
    const token = await t.tokenFor(user);
    expect((await request(t.app).get("/api/files").set(bearer(token))).status).toBe(200);
    await ApiToken.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { id: token.split(":")[0] } });
    const res = await request(t.app).get("/api/files").set(bearer(token));
    expect(res.status).toBe(401);
    expect(res.body.error).toEqual({ code: "invalid_token", message: "the API token is not valid" });
  });
});

describe("disabling a user", () => {
  it("revokes their tokens for good: enabling them again does not bring the tokens back", async () => {
    const { agent: admin } = await t.signIn("admin");
    const user = await t.createUser("technician");
    const tokens = [await t.tokenFor(user), await t.tokenFor(user)];
    const off = await admin.patch(`/api/users/${user.id}`).set(CSRF_HEADER, "1").send({ disabled: true });
    expect(off.status).toBe(200);
    const on = await admin.patch(`/api/users/${user.id}`).set(CSRF_HEADER, "1").send({ disabled: false });
    expect(on.status).toBe(200);
    for (const token of tokens) expect((await request(t.app).get("/api/files").set(bearer(token))).status).toBe(401);
    const rows = await ApiToken.findAll({ where: { userId: user.id } });
    expect(rows.every((r) => r.revokedAt !== null)).toBe(true);
    const audit = await AuditEntry.findOne({ where: { action: "user.update", targetId: String(user.id) }, order: [["id", "ASC"]] });
    expect(audit?.details).toMatchObject({ disabled: true, tokensRevoked: 2 });
    // A new token made after re-enabling works.
    expect((await request(t.app).get("/api/files").set(bearer(await t.tokenFor(user)))).status).toBe(200);
  });
});

describe("CSV formula guard (OWASP CSV injection)", () => {
  it("defuses formulas behind leading whitespace, and leaves plain text alone", () => {
    for (const cell of ["=1+1", " =1+1", "\u00a0\u00a0+SUM(A1)", "  -2+3", "\t@cmd", "\r=x", "\n=x"]) expect(safeText(cell)).toBe(`'${cell}`);
    for (const cell of ["reel-01.wav", "Side A = intro", "", "a -b"]) expect(safeText(cell)).toBe(cell);
  });

  it("exports a path that starts with a space and an equals sign as text", async () => {
    const token = await t.tokenFor(await t.createUser("technician"));
    expect((await ingest(t.app, token, { collection: "CSV", batchKey: "csv-1", report: scanReport([{ path: ' =HYPERLINK("http://evil.test").wav' }]) })).status).toBe(201);
    const { agent } = await t.signIn("auditor");
    const rows = parse((await agent.get("/api/exports/files.csv")).text, { columns: true }) as Record<string, string>[];
    expect(rows.map((r) => r.path)).toContain(`' =HYPERLINK("http://evil.test").wav`);
  });
});

describe("headers", () => {
  it("sends Cache-Control: no-store on answers with tokens, sessions and user lists (ASVS 4.0 V8.2.1)", async () => {
    const { agent } = await t.signIn("admin");
    const answers: [string, request.Response][] = [
      ["POST /api/tokens", await agent.post("/api/tokens").set(CSRF_HEADER, "1").send({ name: "cache-check" })],
      ["GET /api/tokens", await agent.get("/api/tokens")],
      ["GET /api/tokens?all=1", await agent.get("/api/tokens?all=1")],
      ["GET /api/users", await agent.get("/api/users")],
      ["GET /api/session", await agent.get("/api/session")],
    ];
    for (const [what, res] of answers) expect({ what, ok: res.status < 300, cache: res.headers["cache-control"] }).toEqual({ what, ok: true, cache: "no-store" });
    const signIn = await request(t.app).post("/api/session").send({ email: "nobody@harbourside.test", password: "x" });
    expect(signIn.headers["cache-control"]).toBe("no-store");
  });

  it("sends HSTS only when the public URL is HTTPS (ASVS 4.0 V14.4.5)", async () => {
    const plain = await request(t.app).get("/api/health");
    expect(plain.headers["strict-transport-security"]).toBeUndefined();
    const tls = await request(t.makeApp({ publicUrl: "https://qc.harbourside.test" })).get("/api/health");
    expect(tls.headers["strict-transport-security"]).toBe("max-age=31536000; includeSubDomains");
  });
});
