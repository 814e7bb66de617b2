/**
 * Issue #17 end to end, as an archive would try it: a folder of FLAC, AIFF, AIFF-C (A-law), µ-law WAV, a
 * damaged FLAC, an empty AIFF and a FLAC with a Latin-1 name goes through `tidemark scan --upload` and through
 * `tidemark enqueue` + a real `tidemark worker` to a real server (server/src/main.ts, child process). Both must
 * store what a local `tidemark scan` measures (container, encoding, verdict, finding codes, loudness), the
 * portal's Files list must show and filter by each container and the files CSV export must carry it.
 * The inputs are made by Debian's flac, sox and ffmpeg, the outside reference for what each file is; each
 * stored SHA-256 is checked against the file's bytes hashed by OpenSSL (node:crypto).
 */
import type { ChildProcess } from "node:child_process";
import { execFileSync, spawnSync } from "node:child_process";
import { createHash } from "node:crypto";
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { parse } from "csv-parse/sync";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { FilePage, ScanRunDetailDto } from "@tidemark/shared/types/api";
import type { FileReport, ScanReport } from "@tidemark/shared/types/report";
import { connectDatabase, type Database } from "../../server/src/db/connect.ts";
import { migrateUp } from "../../server/src/db/migrator.ts";
import { FileResult, initModels, User } from "../../server/src/models/index.ts";
import { createApiToken } from "../../server/src/services/apiTokens.ts";
import { mix, pinkNoise, sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { createTestDatabase, type TestDatabase } from "../helpers/db.ts";
import { isolatedEnv, runCli } from "../cli/runCli.ts";
import { startChildServer, type ChildServer } from "./helpers/childServer.ts";
import { startWorkerProcess } from "./helpers/workerProcess.ts";

const tools = ["flac", "sox", "ffmpeg"].every((t) => spawnSync(t, [t === "ffmpeg" ? "-version" : "--version"], { stdio: "ignore" }).status === 0);

let testDb: TestDatabase;
let db: Database;
let dir: string;
let reels: string;
let server: ChildServer | null = null;
let token: string;
/** An auditor's token: the exports need the export permission. */
let auditorToken: string;
/** The local scan of the folder: what both the upload and the workers must store. */
let local: Map<string, FileReport>;
const children: ChildProcess[] = [];

const LATIN1 = Buffer.concat([Buffer.from("caf"), Buffer.from([0xe9]), Buffer.from(".flac")]);
const LATIN1_SHOWN = "caf\uFFFD.flac";
/** Shown path → [container, encoding] as the tool that wrote it says. */
const EXPECTED: Record<string, [string, string]> = {
  "reel-1.flac": ["flac", "pcm"], // flac -8
  "reel-2.aifc": ["aifc", "alaw"], // ffmpeg -c:a pcm_alaw -f aiff
  "reel-3.aiff": ["aiff", "pcm"], // sox
  "reel-4.wav": ["wav", "mulaw"], // sox -e u-law
  "damaged.flac": ["flac", "pcm"],
  "empty.aiff": ["aiff", "pcm"], // sox, zero samples
  [LATIN1_SHOWN]: ["flac", "pcm"],
};

beforeAll(async () => {
  if (!tools) return;
  testDb = await createTestDatabase("source_formats");
  db = connectDatabase(testDb.url, { poolMax: 2 });
  await migrateUp(db.sequelize);
  initModels(db.sequelize);
  dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "source-formats-"));
  reels = path.join(dir, "reels");
  mkdirSync(reels);
  const src = path.join(dir, "src.wav");
  const rate = 48000;
  const left = mix(sine({ frequencyHz: 997, sampleRateHz: rate, seconds: 4, peakDbfs: -9 }), pinkNoise({ sampleRateHz: rate, seconds: 4, rmsDbfs: -30, seed: 5 }));
  const right = mix(sine({ frequencyHz: 440, sampleRateHz: rate, seconds: 4, peakDbfs: -12 }), pinkNoise({ sampleRateHz: rate, seconds: 4, rmsDbfs: -32, seed: 6 }));
  writeFileSync(src, encodeWav([left, right], { sampleRateHz: rate, bitDepth: 24 }));
  const run = (cmd: string, args: string[]): void => void execFileSync(cmd, args, { stdio: "ignore" });
  run("flac", ["-s", "-f", "-8", src, "-o", path.join(reels, "reel-1.flac")]);
  run("ffmpeg", ["-loglevel", "error", "-y", "-i", src, "-c:a", "pcm_alaw", "-f", "aiff", path.join(reels, "reel-2.aifc")]);
  run("sox", [src, path.join(reels, "reel-3.aiff")]);
  run("sox", [src, "-e", "u-law", path.join(reels, "reel-4.wav")]);
  run("sox", ["-n", "-r", "48000", "-b", "16", "-c", "2", path.join(reels, "empty.aiff"), "trim", "0", "0"]);
  const damaged = readFileSync(path.join(reels, "reel-1.flac"));
  damaged[Math.floor(damaged.length / 2)] ^= 0xff;
  writeFileSync(path.join(reels, "damaged.flac"), damaged);
  // The Latin-1 name through a Buffer path: the bytes 63 61 66 E9 …, not UTF-8.
  run("flac", ["-s", "-f", "-5", src, "-o", path.join(dir, "latin1.flac")]);
  writeFileSync(Buffer.concat([Buffer.from(`${reels}/`), LATIN1]), readFileSync(path.join(dir, "latin1.flac")));

  // Exit 1: the damaged FLAC and the empty AIFF fail.
  const scanned = await runCli(["scan", "reels", "--format", "json"], { cwd: dir, env: isolatedEnv() });
  expect(scanned.exitCode, scanned.stderr).toBe(1);
  local = new Map((JSON.parse(scanned.stdout) as ScanReport).files.map((f) => [f.path, f]));

  const user = await User.create({ email: "formats.desk@harbourside.test", name: "Formats Desk", role: "technician", passwordHash: "scrypt$unused" });
  token = (await createApiToken(user.id, "source formats")).plaintext;
  const auditor = await User.create({ email: "formats.audit@harbourside.test", name: "Formats Audit", role: "auditor", passwordHash: "scrypt$unused" });
  auditorToken = (await createApiToken(auditor.id, "source formats audit")).plaintext;
  server = await startChildServer({
    DATABASE_URL: testDb.url,
    DATA_DIR: dir,
    OBJECT_STORE_DIR: path.join(dir, "objects"),
    SESSION_SECRET: "source-formats-secret-0123456789abcdef",
  });
}, 120_000);

afterAll(async () => {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill("SIGKILL");
  await server?.kill("SIGTERM");
  await db?.close();
  await testDb?.drop();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

const api = async <T>(route: string): Promise<T> => {
  const res = await fetch(`${server!.url}${route}`, { headers: { authorization: `Bearer ${token}` } });
  expect(res.status, route).toBe(200);
  return (await res.json()) as T;
};

/** A stored row agrees with the local scan of the same file. */
function expectAsScanned(row: FileResult, where: string): void {
  const scanned = local.get(row.path);
  expect(scanned, `${where}: ${row.path} in the local scan`).toBeDefined();
  const [container, encoding] = EXPECTED[row.path];
  expect(row.format, `${where}: ${row.path}`).toMatchObject({ container, encoding });
  expect(scanned!.format).toMatchObject({ container, encoding });
  expect(row.verdict, `${where}: ${row.path}`).toBe(scanned!.verdict);
  // possible-duplicate is the server's own finding across files (these hold the same audio in several containers).
  const stored = row.findingCodes.filter((c) => c !== "possible-duplicate").sort();
  expect(stored, `${where}: ${row.path}`).toEqual([...new Set(scanned!.findings.map((f) => f.code))].sort());
  if (scanned!.metrics?.integratedLufs == null) expect(row.integratedLufs).toBeNull();
  else expect(row.integratedLufs!).toBeCloseTo(scanned!.metrics.integratedLufs, 6);
  const onDisk = row.pathBytes ? Buffer.concat([Buffer.from(`${reels}/`), Buffer.from(row.pathBytes, "base64")]) : path.join(reels, row.path);
  expect(row.sha256).toBe(createHash("sha256").update(readFileSync(onDisk)).digest("hex"));
}

describe.runIf(tools)("FLAC, AIFF, AIFF-C, G.711 WAV and a Latin-1 name from scan, upload and the workers", () => {
  it("the local scan reads every file as its tool wrote it; the damaged FLAC and the empty AIFF fail with their findings", () => {
    expect([...local.keys()].sort()).toEqual(Object.keys(EXPECTED).sort());
    for (const [p, [container, encoding]] of Object.entries(EXPECTED)) {
      expect(local.get(p)!.error, p).toBeNull();
      expect(local.get(p)!.format, p).toMatchObject({ container, encoding });
    }
    expect(local.get("damaged.flac")!.findings.map((f) => f.code)).toEqual(expect.arrayContaining(["decode-error", "flac-md5-mismatch"]));
    expect(local.get("damaged.flac")!.verdict).toBe("fail");
    expect(local.get("empty.aiff")!.findings.find((f) => f.code === "no-audio")?.severity).toBe("fail");
    expect(local.get("empty.aiff")!.verdict).toBe("fail");
    expect(local.get(LATIN1_SHOWN)!.pathBytes).toBe(LATIN1.toString("base64"));
  });

  it("scan --upload stores each file as scanned; the Files list shows every container and the CSV export carries it", { timeout: 120_000 }, async () => {
    const up = await runCli(["scan", "reels", "--upload", "--server", server!.url, "--collection", "Harbourside formats (upload)", "--format", "json"], {
      cwd: dir,
      env: isolatedEnv({ TIDEMARK_TOKEN: token }),
    });
    expect(up.exitCode, up.stderr).toBe(1);
    const rows = await FileResult.findAll({ include: ["collection"] });
    const uploaded = rows.filter((r) => r.collection?.name === "Harbourside formats (upload)");
    expect(uploaded.map((r) => r.path).sort()).toEqual(Object.keys(EXPECTED).sort());
    for (const row of uploaded) expectAsScanned(row, "upload");

    const page = await api<FilePage>(`/api/files?batch=${uploaded[0].batchId}&pageSize=50`);
    const shown = Object.fromEntries(page.items.map((f) => [f.path, f.format?.container]));
    for (const [p, [container]] of Object.entries(EXPECTED)) expect(shown[p], p).toBe(container);

    // The Files list's container filter (GET /api/files?container=…), checked against the containers the tools wrote.
    for (const container of ["flac", "aiff", "aifc", "wav", "bwf"]) {
      const filtered = await api<FilePage>(`/api/files?batch=${uploaded[0].batchId}&container=${container}&pageSize=50`);
      const want = Object.entries(EXPECTED).filter(([, [c]]) => c === container).map(([p]) => p).sort();
      expect(filtered.items.map((f) => f.path).sort(), container).toEqual(want);
      expect(filtered.total, container).toBe(want.length);
    }
    const unknown = await fetch(`${server!.url}/api/files?container=mp3`, { headers: { authorization: `Bearer ${token}` } });
    expect(unknown.status).toBe(400);

    const csv = await fetch(`${server!.url}/api/exports/files.csv?collection=${uploaded[0].collectionId}`, { headers: { authorization: `Bearer ${auditorToken}` } });
    expect(csv.status).toBe(200);
    // csv-parse (an independent parser) reads the export back.
    const records = parse(await csv.text(), { columns: true, bom: true }) as Record<string, string>[];
    const byPath = Object.fromEntries(records.map((r) => [r.path, r]));
    for (const [p, [container, encoding]] of Object.entries(EXPECTED)) {
      expect(byPath[p]?.container, p).toBe(container);
      expect(byPath[p]?.encoding, p).toBe(encoding);
    }
  });

  it("enqueue + worker store what the local scan measured, Latin-1 name included", { timeout: 120_000 }, async () => {
    const queued = await runCli(["enqueue", "reels", "--server", server!.url, "--collection", "Harbourside formats (workers)", "--run", "formats", "--json"], {
      cwd: dir,
      env: isolatedEnv({ TIDEMARK_TOKEN: token }),
    });
    expect(queued.exitCode, queued.stderr).toBe(0);
    const { run: created, added } = JSON.parse(queued.stdout) as { run: { id: number }; added: number };
    expect(added).toBe(Object.keys(EXPECTED).length);
    const worker = startWorkerProcess({ serverUrl: server!.url, token, name: "formats", children });
    const end = Date.now() + 100_000;
    let run: ScanRunDetailDto | null = null;
    while (Date.now() < end) {
      run = await api<ScanRunDetailDto>(`/api/runs/${created.id}`);
      if (run.counts.done + run.counts.failed === added) break;
      await new Promise((r) => setTimeout(r, 150));
    }
    expect(run?.counts, worker.output()).toMatchObject({ done: added, failed: 0 });
    worker.child.kill("SIGTERM");
    expect((await worker.exit).code).toBe(0);
    const rows = await FileResult.findAll({ where: { batchId: run!.batchId } });
    expect(rows.map((r) => r.path).sort()).toEqual(Object.keys(EXPECTED).sort());
    for (const row of rows) expectAsScanned(row, "worker");
  });
});
