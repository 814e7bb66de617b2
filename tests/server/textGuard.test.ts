/**
 * Text PostgreSQL cannot hold (issue #19 item 4): a lone UTF-16 surrogate or a NUL in any JSON body, or in
 * the upload's report, is a 400 naming the field, never a 500 a client would retry for ever.
 * OWASP ASVS 4.0 V5.1.4 (structured data validated against a defined schema, here: well-formed Unicode).
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { CSRF_HEADER } from "@tidemark/shared/types/api";
import { findBadText } from "../../server/src/middleware/textGuard.ts";
import { Batch } from "../../server/src/models/index.ts";
import { ingest, scanReport } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp({ label: "text" });
});
afterAll(() => t.close());

// JSON text with the escape as it travels: JSON.parse turns "\ud800" into a lone surrogate.
const LONE = "\\ud800";

describe("findBadText", () => {
  it("finds lone surrogates (high or low), NUL, and bad keys, and passes paired surrogates", () => {
    expect(findBadText({ a: ["ok", "x\u{1F3B5}y"] })).toBeNull(); // a real pair: U+1F3B5
    expect(findBadText({ a: ["ok", "x\uD800y"] })).toMatchObject({ field: "a.1", problem: expect.stringMatching(/lone UTF-16 surrogate \(U\+D800\) at position 1/) });
    expect(findBadText({ b: { c: "\uDC00" } })).toMatchObject({ field: "b.c", problem: expect.stringMatching(/U\+DC00/) });
    expect(findBadText({ b: "tape\u0000" })).toMatchObject({ field: "b", problem: expect.stringMatching(/NUL/) });
    expect(findBadText({ ["k\uD800"]: 1 })?.problem).toMatch(/has a key that contains a lone/);
    expect(findBadText("\uD800")?.field).toBe("(root)");
  });
});

describe("every JSON body", () => {
  it.each([
    ["sign-in e-mail", "/api/session", "post", `{"email":"a${LONE}@harbourside.test","password":"x"}`, "email"],
    ["password-reset e-mail", "/api/password-reset", "post", `{"email":"a${LONE}@harbourside.test"}`, "email"],
    ["NUL in a password", "/api/session", "post", `{"email":"a@harbourside.test","password":"x\\u0000"}`, "password"],
  ])("refuses %s with 400 invalid_text naming the field", async (_what, url, _method, body, fieldName) => {
    const res = await request(t.app).post(url).set(CSRF_HEADER, "1").set("content-type", "application/json").send(body);
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("invalid_text");
    expect(res.body.error.message).toContain(`request body: ${fieldName} contains`);
  });

  it("refuses a lone surrogate in a token name, a review reason and a comment of a signed-in user", async () => {
    const { agent } = await t.signIn("supervisor");
    const cases: [string, "post" | "patch", string, string][] = [
      ["/api/tokens", "post", `{"name":"laptop ${LONE}"}`, "name"],
      ["/api/files/1", "patch", `{"reviewState":"flagged","reason":"hiss ${LONE}"}`, "reason"],
      ["/api/files/1/comments", "post", `{"body":"${LONE} here"}`, "body"],
      ["/api/files/review", "post", `{"ids":[1],"reviewState":"accepted","reason":{"nested${LONE}":1}}`, "reason"],
    ];
    for (const [url, method, body, fieldName] of cases) {
      const res = await agent[method](url).set(CSRF_HEADER, "1").set("content-type", "application/json").send(body);
      expect({ url, status: res.status, code: res.body.error?.code }).toEqual({ url, status: 400, code: "invalid_text" });
      expect(res.body.error.message).toContain(fieldName);
    }
  });
});

describe("the upload's report", () => {
  it("refuses a lone surrogate in a path or a metadata field with 400 naming it, storing nothing", async () => {
    const token = await t.tokenFor(await t.createUser("technician"));
    const json = JSON.stringify(scanReport([{ path: "reel-01.wav" }, { path: "reel-02.wav" }]));
    const inPath = json.replace('"reel-02.wav"', `"reel-${LONE}.wav"`);
    const inInfo = json.replace('"INAM":"reel-01.wav"', `"INAM":"Side A ${LONE}"`);
    for (const [report, fieldPath] of [[inPath, "files.1.path"], [inInfo, "files.0.metadata.info.INAM"]] as const) {
      const res = await ingest(t.app, token, { collection: "C", batchKey: `lone-${fieldPath}`, report });
      expect(res.status).toBe(400);
      expect(res.body.error.code).toBe("invalid_text");
      expect(res.body.error.message).toContain(`report: ${fieldPath} contains a lone UTF-16 surrogate`);
    }
    expect(await Batch.count()).toBe(0);
  });
});
