/**
 * Upload limits checked while the body streams (issue #19 item 1): a breach is answered before the client
 * has finished sending, nothing of the refused request stays in the upload folder, and the ingest and the
 * job-result routes share the one reader. OWASP ASVS 4.0 V12.1.1 (size), V12.2.1 (content, not name).
 */
import { spawnSync } from "node:child_process";
import { existsSync, readdirSync, readFileSync } from "node:fs";
import { request as httpRequest, type ClientRequest, type IncomingMessage, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { PART_KINDS, isJsonObject, isPng } from "../../server/src/services/ingestValidation.ts";
import { Batch } from "../../server/src/models/index.ts";
import { ingest, pngBytes, scanReport } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

const LIMITS = { maxReportBytes: 100_000, maxImageBytes: 50_000, maxJsonPartBytes: 20_000, maxExcerptBytes: 30_000, maxImages: 10, maxTotalBytes: 400_000 };
const BOUNDARY = "tidemark-test-boundary";

let t: TestApp;
let token: string;
let server: Server;
let port: number;

beforeAll(async () => {
  t = await startTestApp({ label: "uplim", settings: { upload: LIMITS } });
  token = await t.tokenFor(await t.createUser("technician"));
  server = t.app.listen(0, "127.0.0.1");
  await new Promise((r) => server.once("listening", r));
  port = (server.address() as AddressInfo).port;
});
afterAll(async () => {
  server.closeAllConnections();
  await new Promise((r) => server.close(r));
  await t.close();
});

const filesIn = (dir: string): string[] =>
  existsSync(dir) ? readdirSync(dir, { recursive: true, withFileTypes: true }).filter((e) => e.isFile()).map((e) => path.join(e.parentPath, e.name)) : [];

async function eventually(check: () => boolean, ms = 1500): Promise<boolean> {
  const until = Date.now() + ms;
  while (!check()) {
    if (Date.now() > until) return false;
    await new Promise((r) => setTimeout(r, 20));
  }
  return true;
}

const field = (name: string, value: string): string => `--${BOUNDARY}\r\nContent-Disposition: form-data; name="${name}"\r\n\r\n${value}\r\n`;
const fileHead = (name: string, filename: string, type: string): string =>
  `--${BOUNDARY}\r\nContent-Disposition: form-data; name="${name}"; filename="${filename}"\r\nContent-Type: ${type}\r\n\r\n`;

interface OpenUpload {
  req: ClientRequest;
  response: Promise<{ status: number; body: { error?: { code: string; message: string } } ; headers: IncomingMessage["headers"] }>;
  write(chunk: string | Buffer): Promise<void>;
}

/** A chunked POST we write piece by piece and never finish unless told: the answer must come regardless. */
function openUpload(urlPath: string, headers: Record<string, string> = {}): OpenUpload {
  const req = httpRequest({
    host: "127.0.0.1",
    port,
    method: "POST",
    path: urlPath,
    headers: { authorization: `Bearer ${token}`, "content-type": `multipart/form-data; boundary=${BOUNDARY}`, ...headers },
  });
  req.on("error", () => undefined); // the server may close once it has answered
  const response = new Promise<Awaited<OpenUpload["response"]>>((resolve, reject) => {
    req.once("response", (res) => {
      let text = "";
      res.on("data", (c: Buffer) => (text += c.toString()));
      res.on("end", () => resolve({ status: res.statusCode ?? 0, body: JSON.parse(text || "{}"), headers: res.headers }));
      res.on("error", reject);
    });
  });
  return {
    req,
    response,
    write: (chunk) => new Promise((resolve) => (req.write(chunk) ? resolve() : req.once("drain", () => resolve()))),
  };
}

const within = <T,>(p: Promise<T>, ms: number): Promise<T> =>
  Promise.race([p, new Promise<T>((_, reject) => setTimeout(() => reject(new Error(`no answer within ${ms} ms`)), ms))]);

const reportJson = JSON.stringify(scanReport([{ path: "reel-01.wav" }]));

describe("checked while streaming", () => {
  it("answers 415 on the first bytes of a part that is not what its kind says, before the body ends, keeping nothing", async () => {
    const up = openUpload("/api/ingest");
    await up.write(field("collection", "C") + field("batchKey", "stream-415"));
    await up.write(fileHead("report", "report.json", "application/json") + reportJson + "\r\n");
    await up.write(fileHead("spectrogram", "0.png", "image/png") + "GIF89a-not-a-png-" + "x".repeat(100));
    // The body is still open (no closing boundary): the answer comes anyway.
    const res = await within(up.response, 5000);
    expect(res.status).toBe(415);
    expect(res.body.error?.code).toBe("wrong_file_type");
    expect(res.body.error?.message).toMatch(/spectrogram 0\.png is not a PNG image; it begins with 47 49 46 38/);
    expect(res.headers.connection).toBe("close");
    expect(await eventually(() => filesIn(t.settings.uploadTmpDir!).length === 0)).toBe(true);
    up.req.destroy();
  });

  it("answers 413 once a part passes its kind's cap, before the rest is sent, keeping nothing", async () => {
    const up = openUpload("/api/ingest");
    await up.write(field("collection", "C") + field("batchKey", "stream-413"));
    await up.write(fileHead("report", "report.json", "application/json") + reportJson + "\r\n");
    await up.write(fileHead("spectrogram", "0.png", "image/png"));
    await up.write(pngBytes());
    // Feed 10 kB at a time; the 50 kB cap must stop us long before we would have sent 1 MB.
    let sent = 0;
    let answered = false;
    void up.response.then(() => (answered = true));
    while (!answered && sent < 1_000_000) {
      await up.write(Buffer.alloc(10_000));
      sent += 10_000;
      await new Promise((r) => setTimeout(r, 5));
    }
    const res = await within(up.response, 5000);
    expect(res.status).toBe(413);
    expect(res.body.error?.message).toMatch(/spectrogram 0\.png is larger than 50000 bytes/);
    expect(sent).toBeLessThan(1_000_000);
    expect(await eventually(() => filesIn(t.settings.uploadTmpDir!).length === 0)).toBe(true);
    up.req.destroy();
  });

  it("caps a body whose report does not come first by the global maximum", async () => {
    // Parts first, report never: nothing narrows the budget, so 45 kB parts run into the 400 kB global cap.
    const up = openUpload("/api/ingest");
    let answered = false;
    void up.response.then(() => (answered = true));
    let parts = 0;
    while (!answered && parts < 10) {
      await up.write(fileHead("spectrogram", `${parts}.png`, "image/png"));
      await up.write(Buffer.concat([pngBytes(), Buffer.alloc(45_000)]));
      await up.write("\r\n");
      parts++;
      await new Promise((r) => setTimeout(r, 10));
    }
    const res = await within(up.response, 5000);
    expect(res.status).toBe(413);
    expect(res.body.error?.message).toMatch(/larger than 400000 bytes, the largest upload this server takes/);
    expect(parts).toBeLessThanOrEqual(10);
    expect(await eventually(() => filesIn(t.settings.uploadTmpDir!).length === 0)).toBe(true);
    up.req.destroy();
  });

  it("refuses a declared Content-Length above the global maximum without reading the body", async () => {
    const up = openUpload("/api/ingest", { "content-length": String(LIMITS.maxTotalBytes + 1) });
    await up.write(field("collection", "C"));
    const res = await within(up.response, 5000);
    expect(res.status).toBe(413);
    expect(res.body.error?.message).toContain(`declares ${LIMITS.maxTotalBytes + 1} bytes`);
    up.req.destroy();
  });

  it("refuses an invalid report as soon as the report part ends, before the images", async () => {
    const up = openUpload("/api/ingest");
    await up.write(field("collection", "C") + field("batchKey", "early-422"));
    await up.write(fileHead("report", "report.json", "application/json") + JSON.stringify({ schema: "nonsense" }) + "\r\n");
    await up.write(fileHead("spectrogram", "0.png", "image/png"));
    await up.write(pngBytes());
    const res = await within(up.response, 5000);
    expect(res.status).toBe(422);
    expect(res.body.error?.code).toBe("invalid_report");
    up.req.destroy();
  });

  it("removes what arrived when the client goes away mid-part", async () => {
    const up = openUpload("/api/ingest");
    await up.write(field("collection", "C") + field("batchKey", "gone"));
    await up.write(fileHead("report", "report.json", "application/json") + reportJson + "\r\n");
    await up.write(fileHead("spectrogram", "0.png", "image/png"));
    await up.write(Buffer.concat([pngBytes(), Buffer.alloc(20_000)]));
    expect(await eventually(() => filesIn(t.settings.uploadTmpDir!).length === 1)).toBe(true);
    up.req.destroy();
    expect(await eventually(() => filesIn(t.settings.uploadTmpDir!).length === 0)).toBe(true);
  });
});

describe("part kinds", () => {
  it("the job-result route reads through the same limits (415 on a bad magic before it looks at the job)", async () => {
    const up = openUpload("/api/jobs/999999/result");
    await up.write(fileHead("report", "report.json", "application/json") + reportJson + "\r\n");
    await up.write(fileHead("waveform", "0.png", "image/png") + "not a png at all, not at all");
    const res = await within(up.response, 5000);
    expect(res.status).toBe(415);
    expect(res.body.error?.message).toMatch(/waveform 0\.png is not a PNG image/);
    up.req.destroy();
  });

  it("checks names and close-up indexes of the artefact kinds against the report", async () => {
    const report = scanReport([{ path: "a.wav" }]);
    const cases: [string, string, Buffer, number, string][] = [
      ["levelGrid", "0.png", Buffer.from("{}"), 400, "bad_part_name"],
      ["levelGrid", "0.json", Buffer.from("GIF89a........"), 415, "wrong_file_type"],
      ["closeupSpectrogram", "0.0.png", pngBytes(), 400, "unknown_closeup_index"],
      ["excerpt", "0.png", pngBytes(), 400, "bad_part_name"],
      ["loudnessCurve", "0.json", Buffer.from(`{"schema":"x","pad":"${"y".repeat(25_000)}"}`), 413, "payload_too_large"],
    ];
    for (const [kind, name, bytes, status, code] of cases) {
      const res = await ingest(t.app, token, { collection: "C", batchKey: `kind-${kind}-${name}`, report, images: [{ field: kind as "spectrogram", name, bytes }] });
      expect({ kind, name, status: res.status, code: res.body.error?.code }).toEqual({ kind, name, status, code });
    }
    expect(await Batch.count()).toBe(0);
    expect(await eventually(() => filesIn(t.settings.uploadTmpDir!).length === 0)).toBe(true);
  });

  it("says so when the report is sent as a text field instead of a file part", async () => {
    const res = await ingest(t.app, token, { collection: "C", batchKey: "as-field" }).field("report", reportJson.slice(0, 1000));
    expect(res.status).toBe(400);
    expect(res.body.error.message).toBe('"report" must be sent as a file part (with a filename), not as a text field');
  });

  it("a good upload leaves the upload folder empty too", async () => {
    const res = await ingest(t.app, token, { collection: "C", batchKey: "good", report: scanReport([{ path: "a.wav" }]), images: [{ field: "spectrogram", name: "0.png", bytes: pngBytes() }] });
    expect(res.status).toBe(201);
    expect(await eventually(() => filesIn(t.settings.uploadTmpDir!).length === 0)).toBe(true);
  });
});

describe("magic checks against files made by Debian's tools", () => {
  const tools = spawnSync("sox", ["--version"]).status === 0 && spawnSync("flac", ["--version"]).status === 0;
  it.runIf(tools)("accepts sox's WAV and flac's FLAC by their extension, and refuses them swapped", () => {
    const wav = path.join(t.dir, "tone.wav");
    const flac = path.join(t.dir, "tone.flac");
    expect(spawnSync("sox", ["-n", "-r", "48000", "-b", "16", "-c", "1", wav, "synth", "0.1", "sine", "440"]).status).toBe(0);
    expect(spawnSync("flac", ["--silent", "-f", "-o", flac, wav]).status).toBe(0);
    const excerpt = PART_KINDS.excerpt;
    const wavHead = readFileSync(wav).subarray(0, 16);
    const flacHead = readFileSync(flac).subarray(0, 16);
    expect(excerpt.magic(wavHead, "0.0.wav")).toBe(true);
    expect(excerpt.magic(flacHead, "0.0.flac")).toBe(true);
    expect(excerpt.magic(wavHead, "0.0.flac")).toBe(false);
    expect(excerpt.magic(flacHead, "0.0.wav")).toBe(false);
    expect(isPng(flacHead)).toBe(false);
    expect(isJsonObject(Buffer.from('  \n {"a":1}'))).toBe(true);
    expect(isJsonObject(Buffer.from("[1,2]"))).toBe(false);
  });
});
