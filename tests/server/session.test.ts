/** Sign-in, cookies, CSRF, rate limiting, password policy, tokens, disabled users. */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { CSRF_HEADER } from "@tidemark/shared/types/api";
import { AuditEntry, User } from "../../server/src/models/index.ts";
import { startTestApp, TEST_PASSWORD, type TestApp } from "./helpers/testApp.ts";


let t: TestApp;

beforeAll(async () => {
  t = await startTestApp({ label: "sess", settings: { loginRateLimit: { windowMs: 60_000, limit: 50 } } });
});
afterAll(() => t.close());

function sessionCookie(res: request.Response): string {
  const cookies = ([] as string[]).concat(res.headers["set-cookie"] ?? []);
  const found = cookies.find((c) => c.startsWith("tidemark.sid="));
  if (!found) throw new Error(`no session cookie in ${JSON.stringify(cookies)}`);
  return found;
}

describe("session cookie", () => {
  it("is HttpOnly and SameSite=Lax, and not Secure over plain HTTP", async () => {
    const user = await t.createUser("technician");
    const res = await request(t.app).post("/api/session").send({ email: user.email, password: TEST_PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.user).toMatchObject({ id: user.id, email: user.email, role: "technician", disabled: false });
    expect(res.body.user.passwordHash).toBeUndefined();
    const cookie = sessionCookie(res);
    // RFC 6265 §4.1.2.6: HttpOnly keeps it from scripts; SameSite (RFC 6265bis) keeps it off cross-site posts.
    expect(cookie).toMatch(/;\s*HttpOnly/i);
    expect(cookie).toMatch(/;\s*SameSite=Lax/i);
    expect(cookie).not.toMatch(/;\s*Secure/i);
  });

  it("is Secure when a trusted proxy says the request came over TLS", async () => {
    // Behind a TLS-terminating proxy on loopback.
    const proxied = t.makeApp({ trustProxy: "loopback" });
    const user = await t.createUser("auditor");
    const res = await request(proxied).post("/api/session").set("X-Forwarded-Proto", "https").send({ email: user.email, password: TEST_PASSWORD });
    expect(res.status).toBe(200);
    // RFC 6265 §4.1.2.5: Secure.
    expect(sessionCookie(res)).toMatch(/;\s*Secure/i);
  });

  it("is rotated at sign-in: the id before sign-in is not the id after, and the old one is worthless", async () => {
    const user = await t.createUser("supervisor");
    const agent = request.agent(t.app);
    // Get an anonymous session id first (a failed sign-in does not create one, so make one by signing in and out).
    const first = await agent.post("/api/session").send({ email: user.email, password: TEST_PASSWORD });
    const firstId = sessionCookie(first).split(";")[0];
    const second = await agent.post("/api/session").set(CSRF_HEADER, "1").send({ email: user.email, password: TEST_PASSWORD });
    const secondId = sessionCookie(second).split(";")[0];
    expect(secondId).not.toBe(firstId);
    const stale = await request(t.app).get("/api/session").set("Cookie", firstId);
    expect(stale.status).toBe(401);
    const fresh = await request(t.app).get("/api/session").set("Cookie", secondId);
    expect(fresh.status).toBe(200);
  });

  it("signs out: the cookie no longer works", async () => {
    const { agent } = await t.signIn("technician");
    expect((await agent.get("/api/session")).status).toBe(200);
    expect((await agent.delete("/api/session").set(CSRF_HEADER, "1")).status).toBe(204);
    expect((await agent.get("/api/session")).status).toBe(401);
  });
});

describe("session and user in one query", () => {
  it("loads a signed-in request's session and user in a single query, and no other", async () => {
    const { agent, user } = await t.signIn("auditor");
    const sessionQueries = vi.spyOn(t.db.sessionPool, "query");
    const findByPk = vi.spyOn(User, "findByPk");
    // Sequelize reads its `logging` option on every query: a way to see each one it sends.
    const options = (t.db.sequelize as unknown as { options: { logging: unknown } }).options;
    const logging = options.logging;
    const sequelizeQueries: string[] = [];
    options.logging = (sql: string) => sequelizeQueries.push(sql);
    try {
      const res = await agent.get("/api/session");
      expect(res.status).toBe(200);
      expect(res.body.user).toMatchObject({ id: user.id, email: user.email, role: "auditor" });
      expect(sessionQueries).toHaveBeenCalledTimes(1);
      expect(findByPk).not.toHaveBeenCalled();
      expect(sequelizeQueries).toEqual([]);
    } finally {
      options.logging = logging;
      sessionQueries.mockRestore();
      findByPk.mockRestore();
    }
  });

  it("sees a role change, a disabled account and a deleted account on the very next request", async () => {
    const { agent, user } = await t.signIn("auditor");
    expect((await agent.get("/api/session")).body.user.role).toBe("auditor");
    await user.update({ role: "supervisor" });
    expect((await agent.get("/api/session")).body.user.role).toBe("supervisor");
    await user.update({ disabled: true });
    expect((await agent.get("/api/session")).status).toBe(401);
    // A disabled user's session forgets them: enabling the account again does not sign it back in.
    await user.update({ disabled: false });
    expect((await agent.get("/api/session")).status).toBe(401);
    const again = await t.signInAs(user.email);
    expect((await again.get("/api/session")).status).toBe(200);
    await User.destroy({ where: { id: user.id } });
    expect((await again.get("/api/session")).status).toBe(401);
  });

  it("does not honour a session past its expiry", async () => {
    const { agent, user } = await t.signIn("technician");
    expect((await agent.get("/api/session")).status).toBe(200);
    await t.db.sequelize.query(`update sessions set expire = now() - interval '1 second' where (sess->>'userId') = :id`, {
      replacements: { id: String(user.id) },
    });
    expect((await agent.get("/api/session")).status).toBe(401);
  });
});

describe("sign-in", () => {
  it("answers wrong password and unknown e-mail alike, without saying which", async () => {
    const user = await t.createUser("technician");
    const wrongPassword = await request(t.app).post("/api/session").send({ email: user.email, password: "not-the-password" });
    const unknownEmail = await request(t.app).post("/api/session").send({ email: "nobody-here@harbourside.test", password: TEST_PASSWORD });
    expect(wrongPassword.status).toBe(401);
    expect(unknownEmail.status).toBe(401);
    expect(wrongPassword.body).toEqual(unknownEmail.body);
    // One message naming both parts, so it cannot tell an attacker which one was right.
    expect(wrongPassword.body.error.message).toMatch(/e-mail or password/);
    expect(await AuditEntry.count({ where: { action: "session.sign_in_failed" } })).toBeGreaterThanOrEqual(2);
  });

  it("accepts the e-mail in any letter case", async () => {
    const user = await t.createUser("auditor", { email: "Ines.Case@Harbourside.test" });
    const res = await request(t.app).post("/api/session").send({ email: "ines.case@HARBOURSIDE.test", password: TEST_PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.user.id).toBe(user.id);
  });

  it("refuses a disabled user at sign-in, and ends their live session and tokens everywhere", async () => {
    const user = await t.createUser("technician");
    const agent = await t.signInAs(user.email);
    const token = await t.tokenFor(user);
    expect((await agent.get("/api/files")).status).toBe(200);
    expect((await request(t.app).get("/api/files").set("Authorization", `Bearer ${token}`)).status).toBe(200);
    await user.update({ disabled: true });
    expect((await agent.get("/api/files")).status).toBe(401);
    expect((await request(t.app).get("/api/files").set("Authorization", `Bearer ${token}`)).status).toBe(401);
    const again = await request(t.app).post("/api/session").send({ email: user.email, password: TEST_PASSWORD });
    expect(again.status).toBe(401);
  });

  it("is rate limited after repeated failures from one address (429 in the JSON shape), not counting successes", async () => {
    const limited = t.makeApp({ loginRateLimit: { windowMs: 60_000, limit: 3 } });
    const user = await t.createUser("technician");
    const good = () => request(limited).post("/api/session").send({ email: user.email, password: TEST_PASSWORD });
    const bad = () => request(limited).post("/api/session").send({ email: user.email, password: "wrong-wrong-wrong" });
    for (let i = 0; i < 4; i++) expect((await good()).status).toBe(200);
    const statuses = [];
    for (let i = 0; i < 4; i++) statuses.push((await bad()).status);
    expect(statuses).toEqual([401, 401, 401, 429]);
    const blocked = await good();
    expect(blocked.status).toBe(429);
    expect(blocked.body.error.code).toBe("rate_limited");
    expect(blocked.headers["ratelimit-policy"]).toBeTruthy();
  });
});

describe("CSRF", () => {
  it("refuses cookie-authenticated writes without the custom header", async () => {
    const { agent } = await t.signIn("admin");
    const res = await agent.post("/api/tokens").send({ name: "no header" });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe("csrf_header");
    expect((await agent.post("/api/tokens").set(CSRF_HEADER, "1").send({ name: "with header" })).status).toBe(201);
  });

  it("refuses a cross-origin Origin even with the header, and accepts the public or own origin", async () => {
    const { agent } = await t.signIn("admin");
    const evil = await agent.post("/api/tokens").set(CSRF_HEADER, "1").set("Origin", "https://evil.example").send({ name: "x" });
    expect(evil.status).toBe(403);
    expect(evil.body.error.code).toBe("csrf_origin");
    const portal = await agent.post("/api/tokens").set(CSRF_HEADER, "1").set("Origin", "http://portal.test").send({ name: "y" });
    expect(portal.status).toBe(201);
    const login = await request(t.app).post("/api/session").set("Origin", "https://evil.example").send({ email: "a@b.c", password: "whatever" });
    expect(login.status).toBe(403);
  });

  it("does not ask token-authenticated writes for the header (no ambient credentials)", async () => {
    const user = await t.createUser("technician");
    const token = await t.tokenFor(user);
    // Past the CSRF check (which would answer 403) to the file lookup.
    const res = await request(t.app).post("/api/files/999999/comments").set("Authorization", `Bearer ${token}`).send({ body: "hi" });
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe("not_found");
  });
});

describe("API tokens", () => {
  it("work as Bearer id:secret and as HTTP Basic (user = id, password = secret); a wrong secret or revoked token is 401", async () => {
    const { agent, user } = await t.signIn("technician");
    const created = await agent.post("/api/tokens").set(CSRF_HEADER, "1").send({ name: "cli on reel-room-pc" });
    expect(created.status).toBe(201);
    const { id, token } = created.body as { id: string; token: string };
    const [tokenId, secret] = token.split(":");
    expect(tokenId).toBe(id);
    expect(secret.length).toBeGreaterThanOrEqual(43);

    const bearer = await request(t.app).get("/api/session").set("Authorization", `Bearer ${token}`);
    expect(bearer.status).toBe(200);
    expect(bearer.body.user.id).toBe(user.id);
    const basic = await request(t.app).get("/api/session").auth(tokenId, secret);
    expect(basic.status).toBe(200);

    const wrong = await request(t.app).get("/api/session").set("Authorization", `Bearer ${tokenId}:${secret.slice(0, -2)}xx`);
    expect(wrong.status).toBe(401);
    expect(wrong.body.error.code).toBe("invalid_token");
    const garbage = await request(t.app).get("/api/session").set("Authorization", "Bearer nonsense");
    expect(garbage.status).toBe(401);

    const listed = await agent.get("/api/tokens");
    expect(listed.body.map((x: { id: string }) => x.id)).toContain(id);
    expect(JSON.stringify(listed.body)).not.toContain(secret);
    expect((await agent.delete(`/api/tokens/${id}`).set(CSRF_HEADER, "1")).status).toBe(204);
    expect((await request(t.app).get("/api/session").set("Authorization", `Bearer ${token}`)).status).toBe(401);
    const after = (await agent.get("/api/tokens")).body.find((x: { id: string }) => x.id === id);
    expect(after.revokedAt).not.toBeNull();
  });

  it("are stored hashed: the database never holds the secret", async () => {
    const { agent } = await t.signIn("supervisor");
    const { token } = (await agent.post("/api/tokens").set(CSRF_HEADER, "1").send({ name: "hash check" })).body as { token: string };
    const [id, secret] = token.split(":");
    const [rows] = await t.db.sequelize.query(`select * from api_tokens where id = $1`, { bind: [id] });
    const stored = JSON.stringify(rows);
    expect(stored).not.toContain(secret);
    const { createHash } = await import("node:crypto");
    expect(stored).toContain(createHash("sha256").update(secret).digest("hex"));
  });

  it("cannot manage tokens or users: those need a signed-in session", async () => {
    const admin = await t.createUser("admin");
    const token = await t.tokenFor(admin);
    const res = await request(t.app).post("/api/tokens").set("Authorization", `Bearer ${token}`).send({ name: "minted by a token" });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe("session_required");
  });
});

describe("password policy", () => {
  it("refuses short passwords and ones containing the e-mail (422), accepts a long passphrase", async () => {
    const { agent } = await t.signIn("admin");
    const make = (email: string, password: string) => agent.post("/api/users").set(CSRF_HEADER, "1").send({ email, name: "Policy Test", role: "technician", password });
    const short = await make("short@harbourside.test", "tide-1234");
    expect(short.status).toBe(422);
    expect(short.body.error.message).toMatch(/at least 12/);
    const mail = await make("quartermaster@harbourside.test", "quartermaster-2026!");
    expect(mail.status).toBe(422);
    expect(mail.body.error.message).toMatch(/e-mail/);
    const same = await make("same@harbourside.test", "aaaaaaaaaaaaaaaa");
    expect(same.status).toBe(422);
    const ok = await make("policy-ok@harbourside.test", "gulls over the breakwater");
    expect(ok.status).toBe(201);
    const dup = await make("Policy-OK@harbourside.test", "gulls over the breakwater");
    expect(dup.status).toBe(409);
  });

  it("keeps an admin from disabling or demoting themselves", async () => {
    const { agent, user } = await t.signIn("admin");
    const res = await agent.patch(`/api/users/${user.id}`).set(CSRF_HEADER, "1").send({ disabled: true });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe("self_lockout");
  });
});

describe("every response", () => {
  it("echoes a sane X-Request-Id, makes one otherwise, and carries helmet's headers", async () => {
    const given = await request(t.app).get("/api/health").set("X-Request-Id", "ci-run-42.step:7");
    expect(given.headers["x-request-id"]).toBe("ci-run-42.step:7");
    const hostile = await request(t.app).get("/api/health").set("X-Request-Id", "<script>alert(1)</script>");
    expect(hostile.headers["x-request-id"]).toMatch(/^[0-9a-f-]{36}$/);
    expect(given.headers["x-content-type-options"]).toBe("nosniff");
    expect(given.headers["content-security-policy"]).toContain("default-src 'self'");
    expect(given.headers["x-powered-by"]).toBeUndefined();
  });

  it("answers malformed JSON and bad query values with 400 in the one shape", async () => {
    const bad = await request(t.app).post("/api/session").set("content-type", "application/json").send('{"email":');
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe("invalid_json");
    const { agent } = await t.signIn("auditor");
    const query = await agent.get("/api/files?sort=loudest&pageSize=100000");
    expect(query.status).toBe(400);
    expect(query.body.error.message).toContain("sort");
    expect(query.body.error.message).toContain("pageSize");
    const id = await agent.get("/api/files/abc");
    expect(id.status).toBe(400);
    expect(id.body.error.code).toBe("invalid_id");
  });
});
