/**
 * E-mail through real SMTP to the local fake (smtp-server): the failing-batch summary to supervisors, and
 * password reset by single-use, expiring link.
 */
import path from "node:path";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { CSRF_HEADER } from "@tidemark/shared/types/api";
import { startSmtpFake, type SmtpFake } from "../../server/src/mail/smtpFake.ts";
import { PasswordReset } from "../../server/src/models/index.ts";
import { backgroundIdle } from "../../server/src/services/background.ts";
import { readMailbox, waitForMail } from "./helpers/mailbox.ts";
import { finding, ingest, scanReport } from "./helpers/reports.ts";
import { PUBLIC_URL, startTestApp, TEST_PASSWORD, type TestApp } from "./helpers/testApp.ts";

let t: TestApp;
let smtp: SmtpFake;
let mailDir: string;

beforeAll(async () => {
  mailDir = path.join(process.env.TIDEMARK_TEST_TMP ?? "/tmp", `mail-${process.pid}-${Date.now()}`);
  smtp = await startSmtpFake({ dir: mailDir, port: 0 });
  t = await startTestApp({ label: "mail", smtpUrl: smtp.url, settings: { passwordResetRateLimit: { windowMs: 60_000, limit: 100 } } });
});
afterAll(async () => {
  await t.close();
  await smtp.close();
});

const sent = async (): Promise<void> => {
  await backgroundIdle(); // a reset request's lookup and e-mail run after its 202
  await t.mailer.idle();
};

describe("failing-batch e-mail", () => {
  it("goes to every active supervisor with the failing files and links to the portal", async () => {
    const supervisors = [await t.createUser("supervisor", { email: "morwenna.hale@harbourside.test" }), await t.createUser("supervisor", { email: "night.shift@harbourside.test" })];
    await t.createUser("supervisor", { email: "retired@harbourside.test", disabled: true });
    await t.createUser("technician", { email: "not-a-supervisor@harbourside.test" });
    const token = await t.tokenFor(await t.createUser("technician"));
    const res = await ingest(t.app, token, {
      collection: "Lighthouse Choir Reels",
      batchKey: "mail-1",
      report: scanReport([
        { path: "reel-05/evensong.wav", verdict: "fail", findings: [finding("clipping", "fail")] },
        { path: "reel-05/unreadable.wav", verdict: "error" },
        { path: "reel-05/fine.wav", verdict: "pass" },
      ]),
    });
    expect(res.status).toBe(201);
    await sent();
    const [mail] = await waitForMail(mailDir, 1);
    expect(mail.to.sort()).toEqual(supervisors.map((s) => s.email).sort());
    expect(mail.subject).toBe(`Tidemark: 2 failing files in Lighthouse Choir Reels, batch ${res.body.batchId}`);
    expect(mail.text).toContain("reel-05/evensong.wav (fail: clipping)");
    expect(mail.text).toContain("reel-05/unreadable.wav (error)");
    expect(mail.text).not.toContain("fine.wav");
    const { FileResult } = await import("../../server/src/models/index.ts");
    const evensong = await FileResult.findOne({ where: { path: "reel-05/evensong.wav" } });
    expect(mail.text).toContain(`${PUBLIC_URL}/files/${evensong!.id}`);
    expect(mail.text).toContain(`${PUBLIC_URL}/files?batch=${res.body.batchId}`);
  });

  it("cannot be given extra lines by a path or profile name, and names the batch number, not a long key", async () => {
    await t.createUser("supervisor", { email: "injection.check@harbourside.test" });
    const token = await t.tokenFor(await t.createUser("technician"));
    const longKey = "k".repeat(64);
    const report = scanReport([{ path: "reel-09/a.wav\r\n\r\nSign in at http://evil.test/login to keep your account\u2028Bcc: x@evil.test", verdict: "fail" }]);
    report.profile.name = "custom\nReply-To: x@evil.test";
    const res = await ingest(t.app, token, { collection: "Harbour Walks", batchKey: longKey, report });
    expect(res.status).toBe(201);
    await sent();
    const mail = (await waitForMail(mailDir, 1)).find((m) => m.subject.includes("Harbour Walks"));
    expect(mail).toBeDefined();
    expect(mail!.subject).toBe(`Tidemark: 1 failing file in Harbour Walks, batch ${res.body.batchId}`);
    expect(mail!.headers["reply-to"]).toBeUndefined();
    expect(mail!.headers.bcc).toBeUndefined();
    const lines = mail!.text.split(/\r?\n/);
    // The injected text is still there for the reader, but on the path's own line, not as a line of its own.
    expect(lines.some((l) => /^\s*Sign in at/.test(l))).toBe(false);
    expect(lines.some((l) => l.startsWith("  - reel-09/a.wav") && l.includes("Sign in at http://evil.test/login"))).toBe(true);
    expect(lines.some((l) => /^Reply-To:/i.test(l))).toBe(false);
    expect(mail!.text).toContain(`(batch key "${longKey}")`);
  });

  it("is not sent for a batch without failures, nor again for a repeated upload", async () => {
    const before = readMailbox(mailDir).length;
    const token = await t.tokenFor(await t.createUser("technician"));
    await ingest(t.app, token, { collection: "C", batchKey: "mail-clean", report: scanReport([{ path: "ok.wav" }]) });
    const failing = scanReport([{ path: "bad.wav", verdict: "fail" }]);
    await ingest(t.app, token, { collection: "C", batchKey: "mail-once", report: failing });
    await ingest(t.app, token, { collection: "C", batchKey: "mail-once", report: failing });
    await sent();
    await waitForMail(mailDir, before + 1);
    await new Promise((r) => setTimeout(r, 200));
    expect(readMailbox(mailDir).length).toBe(before + 1);
  });
});

describe("password reset", () => {
  const resetMailFor = async (email: string) => {
    await sent();
    const mail = (await waitForMail(mailDir, 1)).filter((m) => m.to.includes(email) && m.subject.includes("reset"));
    expect(mail.length).toBeGreaterThan(0);
    const link = /(http\S+\/reset-password\?token=(\S+))/.exec(mail[mail.length - 1].text);
    expect(link, mail[mail.length - 1].text).not.toBeNull();
    return { link: link![1], token: decodeURIComponent(link![2]) };
  };

  it("answers 202 whether or not the address exists, and mails only real accounts", async () => {
    const user = await t.createUser("technician", { email: "tobias.reed@harbourside.test" });
    const before = readMailbox(mailDir).length;
    const known = await request(t.app).post("/api/password-reset").send({ email: user.email });
    const unknown = await request(t.app).post("/api/password-reset").send({ email: "ghost@harbourside.test" });
    expect(known.status).toBe(202);
    expect(unknown.status).toBe(202);
    expect(known.body).toEqual(unknown.body);
    await sent();
    await waitForMail(mailDir, before + 1);
    expect(readMailbox(mailDir).filter((m) => m.to.includes("ghost@harbourside.test"))).toEqual([]);
    const { link } = await resetMailFor(user.email);
    expect(link.startsWith(`${PUBLIC_URL}/reset-password?token=`)).toBe(true);
  });

  it("sets a new password once: the link then fails, old sessions end, the new password works", async () => {
    const user = await t.createUser("supervisor", { email: "reset.me@harbourside.test" });
    const oldSession = await t.signInAs(user.email);
    await request(t.app).post("/api/password-reset").send({ email: user.email });
    const { token } = await resetMailFor(user.email);
    expect(JSON.stringify(await PasswordReset.findAll({ raw: true }))).not.toContain(token);

    const weak = await request(t.app).post("/api/password-reset/confirm").send({ token, password: "short" });
    expect(weak.status).toBe(422);
    const ok = await request(t.app).post("/api/password-reset/confirm").send({ token, password: "new tide tables 2027" });
    expect(ok.status).toBe(204);
    const reuse = await request(t.app).post("/api/password-reset/confirm").send({ token, password: "another tide table" });
    expect(reuse.status).toBe(400);
    expect(reuse.body.error.code).toBe("invalid_reset_token");

    expect((await oldSession.get("/api/session")).status).toBe(401);
    expect((await request(t.app).post("/api/session").send({ email: user.email, password: TEST_PASSWORD })).status).toBe(401);
    expect((await request(t.app).post("/api/session").send({ email: user.email, password: "new tide tables 2027" })).status).toBe(200);
  });

  it("refuses an expired link", async () => {
    const user = await t.createUser("auditor", { email: "late.reader@harbourside.test" });
    await request(t.app).post("/api/password-reset").send({ email: user.email });
    const { token } = await resetMailFor(user.email);
    await PasswordReset.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { userId: user.id } });
    const res = await request(t.app).post("/api/password-reset/confirm").send({ token, password: "too late for this one" });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("invalid_reset_token");
  });

  it("needs the CSRF header when sent with a session cookie, like any cookie-authenticated write", async () => {
    const { agent } = await t.signIn("technician");
    const res = await agent.post("/api/password-reset").send({ email: "x@harbourside.test" });
    expect(res.status).toBe(403);
    expect((await agent.post("/api/password-reset").set(CSRF_HEADER, "1").send({ email: "x@harbourside.test" })).status).toBe(202);
  });
});
