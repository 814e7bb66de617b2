/**
 * The S3 driver against a small S3-compatible fake written here (path-style PUT/GET/DELETE and
 * ListObjectsV2 with continuation tokens, as in the S3 API reference), then a full ingest through it.
 */
import { createServer, type IncomingMessage, type Server } from "node:http";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { FileResult } from "../../server/src/models/index.ts";
import { ObjectNotFoundError } from "../../server/src/storage/ObjectStore.ts";
import { createS3Store } from "../../server/src/storage/s3Store.ts";
import { excerptFlacBytes, reviewParts, reviewReport } from "./helpers/artefacts.ts";
import { ingest, pngBytes, scanReport } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

interface FakeS3 {
  endpoint: string;
  objects: Map<string, { body: Buffer; contentType: string; lastModified: Date }>;
  requests: { method: string; url: string; authorization: string; range: string | null }[];
  close(): Promise<void>;
}

const PAGE_SIZE = 2;
const xmlEscape = (s: string): string => s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;");

async function body(req: IncomingMessage): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const c of req) chunks.push(c as Buffer);
  return Buffer.concat(chunks);
}

async function startFakeS3(bucket: string): Promise<FakeS3> {
  const objects: FakeS3["objects"] = new Map();
  const requests: FakeS3["requests"] = [];
  const server: Server = createServer(async (req, res) => {
    const url = new URL(req.url ?? "/", "http://fake");
    requests.push({ method: req.method ?? "", url: req.url ?? "", authorization: String(req.headers.authorization ?? ""), range: req.headers.range ?? null });
    const [, b, ...rest] = url.pathname.split("/");
    const key = decodeURIComponent(rest.join("/"));
    const error = (status: number, code: string) => {
      res.writeHead(status, { "content-type": "application/xml" }).end(`<?xml version="1.0"?><Error><Code>${code}</Code><Message>${code}</Message></Error>`);
    };
    if (b !== bucket) return error(404, "NoSuchBucket");
    if (req.method === "PUT" && key) {
      objects.set(key, { body: await body(req), contentType: String(req.headers["content-type"] ?? ""), lastModified: new Date() });
      return res.writeHead(200, { etag: '"fake"' }).end();
    }
    if (req.method === "HEAD" && key) {
      const found = objects.get(key);
      if (!found) return res.writeHead(404).end();
      return res.writeHead(200, { "content-type": found.contentType, "content-length": found.body.length, "last-modified": found.lastModified.toUTCString() }).end();
    }
    if (req.method === "GET" && key) {
      const found = objects.get(key);
      if (!found) return error(404, "NoSuchKey");
      const headers = { "content-type": found.contentType, "last-modified": found.lastModified.toUTCString() };
      // GetObject's Range: only the single "bytes=first-last" form, which is all the driver sends.
      const range = /^bytes=(\d+)-(\d+)$/.exec(req.headers.range ?? "");
      if (range) {
        const [first, last] = [Number(range[1]), Math.min(Number(range[2]), found.body.length - 1)];
        const part = found.body.subarray(first, last + 1);
        return res.writeHead(206, { ...headers, "content-length": part.length, "content-range": `bytes ${first}-${last}/${found.body.length}` }).end(part);
      }
      return res.writeHead(200, { ...headers, "content-length": found.body.length }).end(found.body);
    }
    if (req.method === "DELETE" && key) {
      objects.delete(key);
      return res.writeHead(204).end();
    }
    if (req.method === "GET" && url.searchParams.get("list-type") === "2") {
      const prefix = url.searchParams.get("prefix") ?? "";
      const all = [...objects.keys()].filter((k) => k.startsWith(prefix)).sort();
      const start = Number(url.searchParams.get("continuation-token") ?? 0);
      const page = all.slice(start, start + PAGE_SIZE);
      const truncated = start + PAGE_SIZE < all.length;
      const contents = page
        .map((k) => `<Contents><Key>${xmlEscape(k)}</Key><LastModified>${objects.get(k)!.lastModified.toISOString()}</LastModified><Size>${objects.get(k)!.body.length}</Size></Contents>`)
        .join("");
      return res
        .writeHead(200, { "content-type": "application/xml" })
        .end(
          `<?xml version="1.0" encoding="UTF-8"?><ListBucketResult><Name>${bucket}</Name><Prefix>${xmlEscape(prefix)}</Prefix><KeyCount>${page.length}</KeyCount><MaxKeys>${PAGE_SIZE}</MaxKeys><IsTruncated>${truncated}</IsTruncated>${truncated ? `<NextContinuationToken>${start + PAGE_SIZE}</NextContinuationToken>` : ""}${contents}</ListBucketResult>`,
        );
    }
    error(400, "NotImplemented");
  });
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const address = server.address();
  const port = typeof address === "object" && address ? address.port : 0;
  return { endpoint: `http://127.0.0.1:${port}`, objects, requests, close: () => new Promise((r) => server.close(() => r())) };
}

let fake: FakeS3;
const options = () => ({
  bucket: "harbourside-qc",
  region: "eu-west-2",
  endpoint: fake.endpoint,
  accessKeyId: "AKIDHARBOURSIDE",
  secretAccessKey: "not-a-real-secret",
  forcePathStyle: true,
  prefix: "tidemark/",
});

beforeAll(async () => {
  fake = await startFakeS3("harbourside-qc");
});
afterAll(() => fake.close());

describe("S3 driver", () => {
  it("puts, gets, lists across pages and deletes, under its prefix, with signed requests", async () => {
    const store = createS3Store(options());
    const png = pngBytes(16, 4);
    for (const n of [1, 2, 3]) await store.put(`images/upload-a/${n}-spectrogram.png`, png, "image/png");
    await store.put("other/thing.png", png, "image/png");
    expect([...fake.objects.keys()].sort()).toEqual([
      "tidemark/images/upload-a/1-spectrogram.png",
      "tidemark/images/upload-a/2-spectrogram.png",
      "tidemark/images/upload-a/3-spectrogram.png",
      "tidemark/other/thing.png",
    ]);
    expect(fake.objects.get("tidemark/other/thing.png")!.contentType).toBe("image/png");
    // AWS Signature Version 4: "AWS4-HMAC-SHA256 Credential=<key id>/<date>/<region>/s3/aws4_request, …".
    expect(fake.requests[0].authorization).toMatch(/^AWS4-HMAC-SHA256 Credential=AKIDHARBOURSIDE\/\d{8}\/eu-west-2\/s3\/aws4_request/);

    const chunks: Buffer[] = [];
    for await (const c of await store.get("images/upload-a/2-spectrogram.png")) chunks.push(c as Buffer);
    expect(Buffer.concat(chunks).equals(png)).toBe(true);

    const listed: string[] = [];
    for await (const o of store.list("images/")) {
      listed.push(o.key);
      expect(o.lastModified.getTime()).toBeGreaterThan(Date.now() - 60_000);
    }
    expect(listed).toEqual(["images/upload-a/1-spectrogram.png", "images/upload-a/2-spectrogram.png", "images/upload-a/3-spectrogram.png"]);
    expect(fake.requests.filter((r) => r.url.includes("list-type=2")).length).toBe(2);

    await store.delete("images/upload-a/2-spectrogram.png");
    await expect(store.get("images/upload-a/2-spectrogram.png")).rejects.toBeInstanceOf(ObjectNotFoundError);
    await store.delete("images/never-there.png");
  });

  it("refuses unsafe keys before any request is made", async () => {
    const store = createS3Store(options());
    const before = fake.requests.length;
    for (const key of ["../escape.png", "/absolute.png", "images/../../x.png", "images/.hidden.png", "Images/UPPER.png"]) {
      await expect(store.put(key, pngBytes(), "image/png")).rejects.toThrow(/unsafe object key/);
    }
    expect(fake.requests.length).toBe(before);
  });
});

describe("ingest with the S3 driver", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp({ label: "s3", store: () => createS3Store({ ...options(), prefix: "ingest/" }) });
  });
  afterAll(() => t.close());

  it("stores the PNGs in the bucket and serves them back", async () => {
    const token = await t.tokenFor(await t.createUser("technician"));
    const png = pngBytes(32, 8);
    const res = await ingest(t.app, token, { collection: "Lighthouse Choir Reels", batchKey: "s3-1", report: scanReport([{ path: "a.wav" }]), images: [{ field: "spectrogram", name: "0.png", bytes: png }] });
    expect(res.status).toBe(201);
    const file = await FileResult.findOne({ where: { batchId: res.body.batchId } });
    expect(fake.objects.has(`ingest/${file!.spectrogramKey}`)).toBe(true);
    const { agent } = await t.signIn("auditor");
    const served = await agent.get(`/api/files/${file!.id}/spectrogram.png`).buffer(true);
    expect(served.status).toBe(200);
    expect(Buffer.compare(served.body as Buffer, png)).toBe(0);
  });

  it("stores the review artefacts in the bucket, passes an excerpt's Range through to GetObject, and leaves nothing on a repeat", async () => {
    const token = await t.tokenFor(await t.createUser("technician"));
    const flac = excerptFlacBytes();
    const upload = () =>
      ingest(t.app, token, { collection: "Lighthouse Choir Reels", batchKey: "s3-review", report: reviewReport([{ path: "choir/reel-07.wav" }]), images: reviewParts(0, flac).parts });
    const res = await upload();
    expect(res.status).toBe(201);
    const file = await FileResult.findOne({ where: { batchId: res.body.batchId } });
    for (const key of file!.artefactKeys) expect(fake.objects.has(`ingest/${key}`), key).toBe(true);
    const excerptKey = file!.closeups[0].excerptKey!;
    expect(fake.objects.get(`ingest/${excerptKey}`)!.contentType).toBe("audio/flac");

    const { agent } = await t.signIn("auditor");
    const ranged = await agent
      .get(`/api/files/${file!.id}/closeups/0/excerpt`)
      .set("Range", "bytes=10-209")
      .buffer(true)
      .parse((r, done) => {
        const chunks: Buffer[] = [];
        r.on("data", (c: Buffer) => chunks.push(c));
        r.on("end", () => done(null, Buffer.concat(chunks)));
      });
    expect(ranged.status).toBe(206);
    expect(ranged.headers["content-range"]).toBe(`bytes 10-209/${flac.length}`);
    expect(Buffer.compare(ranged.body as Buffer, flac.subarray(10, 210))).toBe(0);
    // Only the requested bytes travelled from the bucket.
    const gets = fake.requests.filter((r) => r.method === "GET" && r.url.includes(excerptKey));
    expect(gets.at(-1)!.range).toBe("bytes=10-209");

    const before = [...fake.objects.keys()].sort();
    const again = await upload();
    expect(again.status).toBe(200);
    expect([...fake.objects.keys()].sort()).toEqual(before);
  });
});
