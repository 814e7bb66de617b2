/**
 * The batch PDF read back with Debian's poppler-utils (an independent PDF reader): pdftotext for the text,
 * pdfinfo for the page count, pdfimages for the embedded spectrogram thumbnails.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import type TestAgent from "supertest/lib/agent.js";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { CSRF_HEADER } from "@tidemark/shared/types/api";
import { finding, ingest, pngBytes, scanReport, sha, type IngestPart } from "./helpers/reports.ts";
import { startTestApp, type TestApp } from "./helpers/testApp.ts";

let t: TestApp;
let auditor: TestAgent;
let batchId: number;
let dir: string;
let text: string;
let pages: number;
let imageRows: string[];
const FILES = 45;

const binary = (res: { on: (e: string, f: (c?: Buffer) => void) => void }, done: (err: Error | null, body: Buffer) => void): void => {
  const chunks: Buffer[] = [];
  res.on("data", (c?: Buffer) => chunks.push(c!));
  res.on("end", () => done(null, Buffer.concat(chunks)));
};

function poppler(cmd: string, args: string[]): string {
  const r = spawnSync(cmd, args, { encoding: "utf8" });
  if (r.error) throw new Error(`${cmd} could not run (install Debian's poppler-utils): ${r.error.message}`);
  expect(r.status, r.stderr).toBe(0);
  return r.stdout;
}

beforeAll(async () => {
  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "batch-pdf-"));
  t = await startTestApp({ label: "batchpdf" });
  const token = await t.tokenFor(await t.createUser("technician", { name: "Ivo Penhallow" }));
  const specs = Array.from({ length: FILES }, (_, i) => ({ path: `reel-${String(i).padStart(2, "0")}.wav`, sha256: sha(`reel-${i}`) }));
  specs[0] = { ...specs[0], verdict: "fail", findings: [finding("clipping", "fail", 61.25), finding("hum", "warn", null)] } as never;
  const images: IngestPart[] = [0, 1, 2].map((i) => ({ field: "spectrogram", name: `${i}.png`, bytes: pngBytes(400, 150) }));
  batchId = (await ingest(t.app, token, { collection: "Lighthouse Choir Reels", batchKey: "lcr-pdf", report: scanReport(specs), images })).body.batchId;
  const supervisor = (await t.signIn("supervisor")).agent;
  const reel1 = (await supervisor.get(`/api/files?batch=${batchId}&q=reel-01`)).body.items[0];
  await supervisor.patch(`/api/files/${reel1.id}`).set(CSRF_HEADER, "1").send({ reviewState: "flagged", reason: "hiss on the lead-in" });
  await supervisor.post(`/api/files/${reel1.id}/comments`).set(CSRF_HEADER, "1").send({ body: "Compare with the 1979 copy." });
  auditor = (await t.signIn("auditor")).agent;

  const res = await auditor.get(`/api/exports/batches/${batchId}.pdf`).buffer(true).parse(binary);
  expect(res.status).toBe(200);
  const file = path.join(dir, "batch.pdf");
  writeFileSync(file, res.body as Buffer);
  text = poppler("pdftotext", ["-layout", file, "-"]);
  pages = Number(/^Pages:\s+(\d+)/m.exec(poppler("pdfinfo", [file]))?.[1]);
  imageRows = poppler("pdfimages", ["-list", file]).split("\n").slice(2).filter((l) => l.trim() !== "");
}, 60_000);

afterAll(async () => {
  await t?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe("batch PDF, read back with poppler-utils", () => {
  it("numbers every page as 'page n of m', m being the real page count", () => {
    expect(pages).toBeGreaterThanOrEqual(3);
    for (let n = 1; n <= pages; n++) expect(text).toContain(`page ${n} of ${pages}`);
    expect(text).not.toContain(`page ${pages + 1} of`);
    // pdftotext separates pages with form feeds: one footer on each.
    expect(text.split("\f").filter((p) => p.trim() !== "").length).toBe(pages);
  });

  it("gives each file's SHA-256", () => {
    for (const i of [0, 17, FILES - 1]) expect(text).toContain(sha(`reel-${i}`));
  });

  it("lists findings with their place in the audio, and times in UTC", () => {
    expect(text).toMatch(/\[fail\] clipping at 1:01\.25–1:01\.75, channel 1: clipping found/);
    expect(text).toMatch(/\[warn\] hum at whole file/);
    expect(text).toContain("Scan: 2026-12-01 09:00:00 UTC – 2026-12-01 09:05:00 UTC");
    expect(text).toMatch(/Exported: \d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2} UTC/);
  });

  it("has the review trail and the comments, with who and when", () => {
    expect(text).toMatch(/\d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2} UTC: .+ set pending to flagged \(“hiss on the lead-in”\)/);
    expect(text).toMatch(/\d{2}:\d{2}:\d{2} UTC, .+: Compare with the 1979 copy\./);
  });

  it("embeds a spectrogram thumbnail for the failing and the flagged file only", () => {
    // pdfimages -list: one "image" row per picture (an alpha channel adds an "smask" row).
    const images = imageRows.filter((l) => l.trim().split(/\s+/)[2] === "image");
    expect(images).toHaveLength(2);
    expect(images.every((l) => /\s400\s+150\s/.test(l))).toBe(true);
  });
});
