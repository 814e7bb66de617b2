/** examples/api-requests.http must run: every request, in order, against the real app (STYLE.md §6). */
import type { AddressInfo } from "node:net";
import type { Server } from "node:http";
import path from "node:path";
import { afterAll, beforeAll, expect, it } from "vitest";
import { projectRoot } from "../../scripts/lib/paths.ts";
import { createDemoUsers } from "../../server/src/seed/demoUsers.ts";
import { parseHttpFile, runHttpFile } from "./helpers/httpFile.ts";
import { startTestApp, TEST_SCRYPT_COST, type TestApp } from "./helpers/testApp.ts";

const FILE = path.join(projectRoot, "examples", "api-requests.http");
let t: TestApp;
let server: Server;
let baseUrl: string;

beforeAll(async () => {
  t = await startTestApp({ label: "examples" });
  await createDemoUsers("harbourside-demo", TEST_SCRYPT_COST);
  server = await new Promise((resolve) => {
    const s = t.app.listen(0, "127.0.0.1", () => resolve(s));
  });
  baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(async () => {
  await new Promise((r) => server.close(r));
  await t.close();
});

it("parses into requests that each say what they expect", () => {
  const parsed = parseHttpFile(FILE);
  expect(parsed.variables.password).toBe("harbourside-demo");
  expect(parsed.requests.length).toBeGreaterThan(30);
  expect(parsed.requests.filter((r) => r.expect === null).map((r) => r.title)).toEqual([]);
});

it("runs every request against the real app with the status it expects", async () => {
  const outcomes = await runHttpFile(parseHttpFile(FILE), { baseUrl });
  const wrong = outcomes
    .filter((o) => o.status !== o.request.expect)
    .map((o) => `line ${o.request.line} "${o.request.title}": got ${o.status}, want ${o.request.expect}: ${JSON.stringify(o.body).slice(0, 200)}`);
  expect(wrong).toEqual([]);
  const upload = outcomes.find((o) => o.request.name === "upload")!;
  expect(upload.body).toMatchObject({ created: true, files: 9 }); // examples/sample-report.json: the nine demo files
  const broken = outcomes.find((o) => o.status === 422)!;
  expect(JSON.stringify(broken.body)).toContain("files");
});
