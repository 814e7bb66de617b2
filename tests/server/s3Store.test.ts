/**
 * The S3 driver against s3rver (npm: a local S3-compatible service), started on
 * loopback by scripts/lib/s3Fake.ts as `npm start -- --s3` starts it; then a full ingest through it. The
 * bucket's contents are read back with a plain S3 client, not through the driver under test.
 */
import { HeadObjectCommand, ListObjectsV2Command, S3Client } from "@aws-sdk/client-s3";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { S3_FAKE_CREDENTIALS, startS3Fake, type S3Fake, type S3FakeRequest } from "../../scripts/lib/s3Fake.ts";
import { FileResult } from "../../server/src/models/index.ts";
import { ObjectNotFoundError } from "../../server/src/storage/ObjectStore.ts";
import { createS3Store } from "../../server/src/storage/s3Store.ts";
import { excerptFlacBytes, reviewParts, reviewReport } from "./helpers/artefacts.ts";
import { ingest, pngBytes, scanReport } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

const BUCKET = "harbourside-qc";
const REGION = "eu-west-2";
const READER = "tidemark-test-reader";

let fake: S3Fake;
let dir: string;
const requests: S3FakeRequest[] = [];
let bucket: S3Client;

/** Every key in the bucket, with its content type, as S3 itself answers (paged by the client). */
async function objects(): Promise<Map<string, { contentType: string }>> {
  const found = new Map<string, { contentType: string }>();
  let token: string | undefined;
  do {
    const page = await bucket.send(new ListObjectsV2Command({ Bucket: BUCKET, ContinuationToken: token }));
    for (const item of page.Contents ?? []) {
      const head = await bucket.send(new HeadObjectCommand({ Bucket: BUCKET, Key: item.Key }));
      found.set(item.Key!, { contentType: head.ContentType ?? "" });
    }
    token = page.IsTruncated ? page.NextContinuationToken : undefined;
  } while (token);
  return found;
}

const options = () => ({
  bucket: BUCKET,
  region: REGION,
  endpoint: fake.endpoint,
  ...S3_FAKE_CREDENTIALS,
  forcePathStyle: true,
  prefix: "tidemark/",
  // Two keys a page, so that three objects take two ListObjectsV2 requests.
  listPageSize: 2,
});

beforeAll(async () => {
  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "s3rver-"));
  fake = await startS3Fake({
    dir,
    bucket: BUCKET,
    // The reading client below marks itself, so `requests` holds only the driver's and the app's.
    onRequest: (req) => req.userAgent.includes(READER) || requests.push(req),
  });
  bucket = new S3Client({ region: REGION, endpoint: fake.endpoint, forcePathStyle: true, credentials: S3_FAKE_CREDENTIALS, customUserAgent: READER });
});
afterAll(async () => {
  bucket.destroy();
  await fake.close();
  rmSync(dir, { recursive: true, force: true });
});

describe("S3 driver", () => {
  it("puts, gets, lists across pages and deletes, under its prefix, with signed requests", async () => {
    const store = createS3Store(options());
    const png = pngBytes(16, 4);
    for (const n of [1, 2, 3]) await store.put(`images/upload-a/${n}-spectrogram.png`, png, "image/png");
    await store.put("other/thing.png", png, "image/png");
    expect([...(await objects()).keys()].sort()).toEqual([
      "tidemark/images/upload-a/1-spectrogram.png",
      "tidemark/images/upload-a/2-spectrogram.png",
      "tidemark/images/upload-a/3-spectrogram.png",
      "tidemark/other/thing.png",
    ]);
    expect((await objects()).get("tidemark/other/thing.png")!.contentType).toBe("image/png");
    await fake.flushRequests();
    // AWS Signature Version 4: "AWS4-HMAC-SHA256 Credential=<key id>/<date>/<region>/s3/aws4_request, …".
    expect(requests[0].authorization).toMatch(/^AWS4-HMAC-SHA256 Credential=S3RVER\/\d{8}\/eu-west-2\/s3\/aws4_request/);

    const chunks: Buffer[] = [];
    for await (const c of await store.get("images/upload-a/2-spectrogram.png")) chunks.push(c as Buffer);
    expect(Buffer.concat(chunks).equals(png)).toBe(true);

    const listed: string[] = [];
    for await (const o of store.list("images/")) {
      listed.push(o.key);
      expect(o.lastModified.getTime()).toBeGreaterThan(Date.now() - 60_000);
    }
    expect(listed).toEqual(["images/upload-a/1-spectrogram.png", "images/upload-a/2-spectrogram.png", "images/upload-a/3-spectrogram.png"]);
    await fake.flushRequests();
    expect(requests.filter((r) => r.url.includes("list-type=2")).length).toBe(2);

    await store.delete("images/upload-a/2-spectrogram.png");
    await expect(store.get("images/upload-a/2-spectrogram.png")).rejects.toBeInstanceOf(ObjectNotFoundError);
    await store.delete("images/never-there.png");
  });

  it("refuses unsafe keys before any request is made", async () => {
    const store = createS3Store(options());
    await fake.flushRequests();
    const before = requests.length;
    for (const key of ["../escape.png", "/absolute.png", "images/../../x.png", "images/.hidden.png", "Images/UPPER.png"]) {
      await expect(store.put(key, pngBytes(), "image/png")).rejects.toThrow(/unsafe object key/);
    }
    await fake.flushRequests();
    expect(requests.length).toBe(before);
  });

  it("is refused by the service with an unknown access key (s3rver checks the key id, not the V4 signature), and stores nothing", async () => {
    const store = createS3Store({ ...options(), accessKeyId: "AKIDHARBOURSIDE" });
    await expect(store.put("images/upload-b/1-spectrogram.png", pngBytes(), "image/png")).rejects.toThrow(/Access Key Id/i);
    expect((await objects()).has("tidemark/images/upload-b/1-spectrogram.png")).toBe(false);
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
    expect((await objects()).has(`ingest/${file!.spectrogramKey}`)).toBe(true);
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
    const stored = await objects();
    for (const key of file!.artefactKeys) expect(stored.has(`ingest/${key}`), key).toBe(true);
    const excerptKey = file!.closeups[0].excerptKey!;
    expect(stored.get(`ingest/${excerptKey}`)!.contentType).toBe("audio/flac");

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
    await fake.flushRequests();
    const gets = requests.filter((r) => r.method === "GET" && r.url.includes(excerptKey));
    expect(gets.at(-1)!.range).toBe("bytes=10-209");

    const before = [...(await objects()).keys()].sort();
    const again = await upload();
    expect(again.status).toBe(200);
    expect([...(await objects()).keys()].sort()).toEqual(before);
  });
});
