import { createHash } from "node:crypto";
import { createServer, type IncomingMessage, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import { mkdtempSync, readdirSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import { defaultBatchKey, deliverBatch } from "../../cli/src/upload/deliverBatch.ts";
import { ApiError, ServerUnreachableError } from "../../cli/src/api/apiClient.ts";
import { postBatch, type IngestBatch } from "../../cli/src/upload/ingestClient.ts";
import { listRejected, listSpooled, loadSpooled } from "../../cli/src/upload/spool.ts";

interface Recorded {
  method: string;
  url: string;
  headers: IncomingMessage["headers"];
  body: Buffer;
}

/** A stand-in for the server's ingest route: records each request and answers from a script. */
function recordingServer(answers: { status: number; body: unknown }[]): Promise<{ server: Server; url: string; requests: Recorded[] }> {
  const requests: Recorded[] = [];
  const server = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => chunks.push(c));
    req.on("end", () => {
      requests.push({ method: req.method ?? "", url: req.url ?? "", headers: req.headers, body: Buffer.concat(chunks) });
      const answer = answers[Math.min(requests.length - 1, answers.length - 1)];
      res.writeHead(answer.status, { "content-type": "application/json" }).end(JSON.stringify(answer.body));
    });
  });
  return new Promise((resolve) =>
    server.listen(0, "127.0.0.1", () => resolve({ server, url: `http://127.0.0.1:${(server.address() as AddressInfo).port}`, requests })),
  );
}

/** Parses a recorded multipart body with the platform's own parser (undici's Response.formData). */
async function formOf(r: Recorded): Promise<FormData> {
  return new Response(new Uint8Array(r.body), { headers: { "content-type": String(r.headers["content-type"]) } }).formData();
}

const PNG_MAGIC = Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
const reportJson = JSON.stringify({ schema: "tidemark.report/1", files: [{ path: "tape-04.bwf" }] });
const batch: IngestBatch = {
  reportJson,
  collection: "Ferry Terminal Interviews 1978",
  batchKey: defaultBatchKey(reportJson),
  images: [
    { field: "spectrogram", fileIndex: 0, bytes: PNG_MAGIC },
    { field: "waveform", fileIndex: 0, bytes: PNG_MAGIC },
  ],
};
const fast = { maxAttempts: 4, baseDelayMs: 5, maxDelayMs: 1000, attemptTimeoutMs: 5000, totalMs: 10_000 };

let running: Server | null = null;
let spool: string;
beforeEach(() => {
  spool = mkdtempSync(path.join(tmpdir(), "tidemark-spool-"));
});
afterEach(async () => {
  await new Promise((r) => (running ? running.close(r) : r(undefined)));
  running = null;
  rmSync(spool, { recursive: true, force: true });
});

describe("ingest upload", () => {
  it("sends the multipart contract: bearer token, collection, batchKey, report and <n>.png parts", async () => {
    const s = await recordingServer([{ status: 201, body: { batchId: 7, created: true, files: 1 } }]);
    running = s.server;
    const result = await postBatch(s.url, "tok1:s3cret", batch, fast);
    expect(result).toEqual({ batchId: 7, created: true, files: 1 });
    expect(s.requests).toHaveLength(1);
    const [r] = s.requests;
    expect(r.method).toBe("POST");
    expect(r.url).toBe("/api/ingest");
    expect(r.headers.authorization).toBe("Bearer tok1:s3cret");
    expect(String(r.headers["content-type"])).toMatch(/^multipart\/form-data; boundary=/);
    const form = await formOf(r);
    expect(form.get("collection")).toBe("Ferry Terminal Interviews 1978");
    expect(form.get("batchKey")).toBe(batch.batchKey);
    const report = form.get("report") as File;
    expect(report.type).toBe("application/json");
    expect(await report.text()).toBe(reportJson);
    for (const field of ["spectrogram", "waveform"]) {
      const image = form.get(field) as File;
      expect(image.name).toBe("0.png");
      expect(new Uint8Array(await image.arrayBuffer())).toEqual(PNG_MAGIC);
    }
  });

  it("uses the report's SHA-256 (node:crypto) as the default batch key", () => {
    expect(defaultBatchKey(reportJson)).toBe(createHash("sha256").update(reportJson, "utf8").digest("hex"));
  });

  it("retries 5xx with backoff and succeeds, sending the same batch key each time", async () => {
    const s = await recordingServer([
      { status: 503, body: { error: { code: "db-down", message: "database unavailable" } } },
      { status: 502, body: {} },
      { status: 200, body: { batchId: 7, created: false, files: 1 } },
    ]);
    running = s.server;
    const retries: string[] = [];
    const result = await postBatch(s.url, "t:s", batch, fast, (attempt, problem, delayMs) => retries.push(`${attempt} ${delayMs} ${problem}`));
    expect(result.created).toBe(false);
    expect(s.requests).toHaveLength(3);
    // Exponential backoff: 5 ms, then 10 ms.
    expect(retries).toEqual(["1 5 503 db-down: database unavailable", "2 10 502 http-502: {}"]);
    const keys = await Promise.all(s.requests.map(async (r) => (await formOf(r)).get("batchKey")));
    expect(new Set(keys)).toEqual(new Set([batch.batchKey]));
  });

  it("does not retry a 4xx and carries the server's error message", async () => {
    const s = await recordingServer([{ status: 401, body: { error: { code: "bad-token", message: "token revoked" } } }]);
    running = s.server;
    const attempt = postBatch(s.url, "t:s", batch, fast);
    await expect(attempt).rejects.toBeInstanceOf(ApiError);
    await expect(attempt).rejects.toThrow("401 bad-token: token revoked");
    expect(s.requests).toHaveLength(1);
  });

  it("gives up after the bounded attempts when nothing listens, and spools the batch", async () => {
    const s = await recordingServer([{ status: 200, body: {} }]);
    const deadUrl = s.url;
    await new Promise((r) => s.server.close(r));
    await expect(postBatch(deadUrl, "t:s", batch, fast)).rejects.toThrow(ServerUnreachableError);
    await expect(postBatch(deadUrl, "t:s", batch, fast)).rejects.toThrow(/after 4 attempts \(last: ECONNREFUSED\)/);

    const logs: string[] = [];
    const outcome = await deliverBatch(deadUrl, "t:s", batch, { env: { TIDEMARK_SPOOL_DIR: spool, TIDEMARK_RETRY_BASE_MS: "1" }, log: (l) => logs.push(l), spoolWhenRejected: false });
    expect(outcome.kind).toBe("spooled");
    expect(logs).toHaveLength(4);
    const dirs = await listSpooled(spool);
    expect(dirs).toHaveLength(1);
    const spooled = await loadSpooled(dirs[0]);
    expect(spooled.server).toBe(deadUrl);
    expect(spooled.batch).toEqual({ ...batch, images: batch.images.map((i) => ({ ...i, bytes: Buffer.from(i.bytes) })) });
    expect(readdirSync(dirs[0]).sort()).toEqual(["batch.json", "report.json", "spectrogram-0.png", "waveform-0.png"]);
  });

  it("keeps a batch refused with 409 aside in rejected/ with the reason, and one refused for its token in the spool", async () => {
    const s = await recordingServer([{ status: 409, body: { error: { code: "batch_key_conflict", message: "batch key already used for other content (files differ: tape-04.bwf)" } } }]);
    running = s.server;
    const options = { env: { TIDEMARK_SPOOL_DIR: spool, TIDEMARK_RETRY_BASE_MS: "1" }, log: () => undefined, spoolWhenRejected: true };
    const conflict = await deliverBatch(s.url, "t:s", batch, options);
    expect(conflict.kind).toBe("rejected");
    expect(s.requests).toHaveLength(1);
    const dir = conflict.kind === "rejected" ? conflict.spooledDir! : "";
    expect(path.dirname(dir)).toBe(path.join(spool, "rejected"));
    expect(JSON.parse(readFileSync(path.join(dir, "rejected.json"), "utf8"))).toMatchObject({ status: 409, code: "batch_key_conflict", server: s.url });
    expect(await listSpooled(spool)).toEqual([]);
    expect((await listRejected(spool)).map((r) => r.reason?.code)).toEqual(["batch_key_conflict"]);

    running.close();
    const t = await recordingServer([{ status: 401, body: { error: { code: "invalid_token", message: "the API token is not valid" } } }]);
    running = t.server;
    const refused = await deliverBatch(t.url, "t:s", batch, options);
    expect(refused.kind === "rejected" && path.dirname(refused.spooledDir!)).toBe(spool);
    expect(await listSpooled(spool)).toHaveLength(1);
  });
});
