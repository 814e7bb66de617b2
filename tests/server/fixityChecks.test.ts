/**
 * `tidemark verify --upload` end to end: the real binary scans into a real server (loopback, real
 * PostgreSQL), a file is changed on disk, and verify sends each file's outcome. The auditor's file page then
 * lists each check (when, which token, outcome), the changed file fails with a `fixity-changed` finding,
 * the audit trail has the event and the supervisors get an e-mail (through real SMTP to the local fake).
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import type { Server } from "node:http";
import type { AddressInfo } from "node:net";
import path from "node:path";
import { afterAll, beforeAll, expect, it } from "vitest";
import type { FileDetailDto } from "@tidemark/shared/types/api";
import { startSmtpFake, type SmtpFake } from "../../server/src/mail/smtpFake.ts";
import { AuditEntry, FileResult } from "../../server/src/models/index.ts";
import { isolatedEnv, runCli } from "../cli/runCli.ts";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { waitForMail } from "./helpers/mailbox.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

let t: TestApp;
let smtp: SmtpFake;
let server: Server;
let url: string;
let dir: string;
let mailDir: string;
let env: Record<string, string>;
const COLLECTION = "Lighthouse Choir Reels";

beforeAll(async () => {
  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? "/tmp", "fixity-checks-"));
  mailDir = path.join(dir, "mail");
  smtp = await startSmtpFake({ dir: mailDir, port: 0 });
  t = await startTestApp({ label: "fixitychecks", smtpUrl: smtp.url });
  await t.createUser("supervisor", { email: "morwenna.hale@harbourside.test" });
  const technician = await t.createUser("technician", { name: "Ivo Penhallow" });
  env = isolatedEnv({ TIDEMARK_TOKEN: await t.tokenFor(technician), TIDEMARK_NO_CONFIG: "1" });
  server = t.app.listen(0, "127.0.0.1");
  await new Promise((resolve) => server.once("listening", resolve));
  url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  mkdirSync(path.join(dir, "reels"), { recursive: true });
  for (const [i, hz] of [220, 330, 440].entries()) {
    writeFileSync(path.join(dir, "reels", `reel-${i}.wav`), encodeWav([sine({ frequencyHz: hz, sampleRateHz: 48000, seconds: 0.5, peakDbfs: -12 })], { sampleRateHz: 48000, bitDepth: 24 }));
  }
  const scan = await runCli(["scan", "reels", "-q", "-w", "1", "-p", "access-copy", "--out", "scan.json", "--upload", "--server", url, "--collection", COLLECTION], { cwd: dir, env });
  expect(scan.exitCode, scan.stderr).toBe(0);
}, 120_000);

afterAll(async () => {
  await new Promise((resolve) => server?.close(resolve));
  await t?.close();
  await smtp?.close();
  rmSync(dir, { recursive: true, force: true });
});

const detail = async (p: string): Promise<FileDetailDto> => {
  const { agent } = await t.signIn("auditor");
  const row = (await FileResult.findOne({ where: { path: p }, order: [["id", "DESC"]] }))!;
  return (await agent.get(`/api/files/${row.id}`)).body as FileDetailDto;
};

it("stores every file's outcome; a changed file fails, is audited and e-mailed", async () => {
  const victim = path.join(dir, "reels", "reel-1.wav");
  const bytes = readFileSync(victim);
  bytes[bytes.length - 7] ^= 0x02;
  writeFileSync(victim, bytes);

  const r = await runCli(["verify", "reels", "--against", "scan.json", "--upload", "--server", url, "--collection", COLLECTION], { cwd: dir, env });
  expect(r.exitCode).toBe(1);
  expect(r.stderr).toContain(`sent 3 fixity checks to ${url} (collection "${COLLECTION}"): 1 changed`);

  const same = await detail("reel-0.wav");
  expect(same.fixityChecks).toHaveLength(1);
  expect(same.fixityChecks[0]).toMatchObject({ outcome: "unchanged", by: { name: "Ivo Penhallow" }, tokenName: expect.any(String) });
  expect(same.verdict).toBe("pass");

  const changed = await detail("reel-1.wav");
  expect(changed.fixityChecks[0]).toMatchObject({ outcome: "changed", expectedSha256: changed.sha256 });
  expect(changed.fixityChecks[0].actualSha256).not.toBe(changed.sha256);
  expect(changed.verdict).toBe("fail");
  expect(changed.findings.map((f) => f.code)).toContain("fixity-changed");
  expect(await AuditEntry.count({ where: { action: "file.fixity_changed", targetId: String(changed.id) } })).toBe(1);

  const [mail] = await waitForMail(mailDir, 1);
  expect(mail.to).toEqual(["morwenna.hale@harbourside.test"]);
  expect(mail.subject).toBe(`Tidemark: 1 file changed since scanned, in ${COLLECTION}`);
  expect(mail.text).toContain(`reel-1.wav\n    ${"http://portal.test"}/files/${changed.id}`);
});

it("records a missing file and a file moved within the collection", async () => {
  rmSync(path.join(dir, "reels", "reel-0.wav"));
  mkdirSync(path.join(dir, "reels", "moved"), { recursive: true });
  writeFileSync(path.join(dir, "reels", "moved", "reel-2.wav"), readFileSync(path.join(dir, "reels", "reel-2.wav")));
  rmSync(path.join(dir, "reels", "reel-2.wav"));
  const r = await runCli(["verify", "reels", "--against", "scan.json", "--upload", "--server", url, "--collection", COLLECTION, "-q"], { cwd: dir, env });
  expect(r.stderr, t.logger.errors.join("\n")).toContain("sent 3 fixity checks");
  expect((await detail("reel-0.wav")).fixityChecks.at(-1)).toMatchObject({ outcome: "missing" });
  expect((await detail("reel-2.wav")).fixityChecks.at(-1)).toMatchObject({ outcome: "moved", movedTo: "moved/reel-2.wav" });
});

it("refuses checks for a collection that does not exist, and needs --against", async () => {
  const unknown = await runCli(["verify", "reels", "--against", "scan.json", "--upload", "--server", url, "--collection", "No Such Reels", "-q"], { cwd: dir, env });
  expect(unknown.exitCode).toBe(2);
  expect(unknown.stderr).toMatch(/404 not_found: no collection named "No Such Reels"/);
  const noReport = await runCli(["verify", "reels", "--upload", "--server", url, "--collection", COLLECTION], { cwd: dir, env });
  expect(noReport.exitCode).toBe(2);
  expect(noReport.stderr).toMatch(/--upload sends the comparison with an earlier report: add --against/);
});
