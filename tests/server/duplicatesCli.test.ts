/**
 * `tidemark match <file> --server URL` end to end: the real binary fingerprints a WAV and asks a real
 * server (listening on loopback, real PostgreSQL) whose index got the original through POST /api/ingest.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import type { Server } from "node:http";
import type { AddressInfo } from "node:net";
import path from "node:path";
import { afterAll, beforeAll, expect, it } from "vitest";
import { encodeFingerprint } from "@tidemark/shared/fingerprint/index";
import { FileResult } from "../../server/src/models/index.ts";
import { isolatedEnv, runCli } from "../cli/runCli.ts";
import { fingerprintOf, programme, withNoise } from "../fixtures/fingerprintSignals.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { ingest, scanReport } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

const RATE = 48000;

let t: TestApp;
let server: Server;
let url: string;
let token: string;
let dir: string;
let originalId: number;

beforeAll(async () => {
  t = await startTestApp({ label: "dupcli" });
  token = await t.tokenFor(await t.createUser("technician"));
  const original = programme({ seed: 1, seconds: 40, sampleRateHz: RATE });
  const report = scanReport([{ path: "reel-01/side-a.wav" }]);
  report.files[0].fingerprint = encodeFingerprint(fingerprintOf([original], RATE));
  const res = await ingest(t.app, token, { collection: "Lighthouse Choir Reels", batchKey: "cli-1", report });
  expect(res.status).toBe(201);
  originalId = (await FileResult.findOne({ where: { batchId: res.body.batchId } }))!.id;

  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? t.dir, "match-"));
  // A trimmed, noisy copy, as a 16-bit WAV the binary reads itself.
  writeFileSync(path.join(dir, "copy.wav"), encodeWav([withNoise(original.subarray(10 * RATE), RATE, 20, 3)], { sampleRateHz: RATE, bitDepth: 16 }));
  writeFileSync(path.join(dir, "other.wav"), encodeWav([programme({ seed: 9, seconds: 20, sampleRateHz: RATE })], { sampleRateHz: RATE, bitDepth: 16 }));
  server = t.app.listen(0, "127.0.0.1");
  await new Promise((resolve) => server.once("listening", resolve));
  url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
}, 120_000);
afterAll(async () => {
  await new Promise((resolve) => server?.close(resolve));
  rmSync(dir, { recursive: true, force: true });
  await t.close();
});

const match = (file: string, tokenValue = token) => runCli(["match", file, "--server", url], { cwd: dir, env: isolatedEnv({ TIDEMARK_TOKEN: tokenValue }) });

it("prints the server's match with score, offset, collection and the portal link, and exits 0", async () => {
  const r = await match("copy.wav");
  expect(r.exitCode, r.stderr).toBe(0);
  const lines = r.stdout.trimEnd().split("\n");
  expect(lines).toHaveLength(1);
  const [matchPath, score, offset, collection, link] = lines[0].split("\t");
  expect(matchPath).toBe("reel-01/side-a.wav");
  expect(Number(score)).toBeGreaterThanOrEqual(12);
  expect(Math.abs(Number(offset) - 10)).toBeLessThanOrEqual(0.1);
  expect(collection).toBe("Lighthouse Choir Reels");
  expect(link).toBe(`${url}/files/${originalId}`);
});

it("exits 1 for a recording the server does not hold, and 5 for a bad token", async () => {
  const none = await match("other.wav");
  expect(none.exitCode).toBe(1);
  expect(none.stdout).toBe("");
  const refused = await match("copy.wav", "tmnope:wrong");
  expect(refused.exitCode).toBe(5);
  expect(refused.stderr).toContain("refused the API token (invalid_token: the API token is not valid); run tidemark login --server");
});
