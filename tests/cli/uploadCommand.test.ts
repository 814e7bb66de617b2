/**
 * login, upload, the spool and scan --upload with the real binary, against a small node:http server in
 * the test that records requests and answers like the ingest contract (201 new / 200 repeat / 4xx).
 */
import { createHash } from "node:crypto";
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from "node:fs";
import { createServer, type IncomingHttpHeaders, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import { tmpdir } from "node:os";
import path from "node:path";
import { PNG } from "pngjs";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { assembleReport } from "../../shared/src/report/assembleReport.ts";
import { reportToJson } from "../../shared/src/report/jsonReport.ts";
import type { ScanReport } from "../../shared/src/types/report.ts";
import { isolatedEnv, runCli } from "./runCli.ts";

interface Recorded {
  method: string;
  url: string;
  headers: IncomingHttpHeaders;
  body: Buffer;
}

interface FakeServer {
  url: string;
  requests: Recorded[];
  /** Answers by route; ingest remembers batch keys so a repeat answers 200 created:false. */
  ingestStatus: number;
  close(): Promise<void>;
}

async function fakeServer(port = 0): Promise<FakeServer> {
  const keys = new Map<string, number>();
  const state: FakeServer = { url: "", requests: [], ingestStatus: 201, close: async () => undefined };
  const server: Server = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => chunks.push(c));
    req.on("end", async () => {
      const rec = { method: req.method ?? "", url: req.url ?? "", headers: req.headers, body: Buffer.concat(chunks) };
      state.requests.push(rec);
      const json = (status: number, body: unknown, headers: Record<string, string> = {}): void =>
        void res.writeHead(status, { "content-type": "application/json", ...headers }).end(JSON.stringify(body));
      if (rec.url === "/api/session") {
        const { email, password } = JSON.parse(rec.body.toString()) as { email: string; password: string };
        if (email === "r.pennant@harbourside.example" && password === "correct horse") {
          return json(200, { user: { id: 1, email } }, { "set-cookie": "tidemark.sid=s%3Aabc123; Path=/; HttpOnly; SameSite=Lax" });
        }
        return json(401, { error: { code: "bad-credentials", message: "e-mail or password is wrong" } });
      }
      if (rec.url === "/api/tokens") {
        if (rec.headers.cookie !== "tidemark.sid=s%3Aabc123" || rec.headers["x-tidemark-request"] !== "1") {
          return json(403, { error: { code: "csrf", message: "missing session or CSRF header" } });
        }
        return json(201, { id: "tok7", name: JSON.parse(rec.body.toString()).name, token: "tok7:s3cret" });
      }
      if (rec.url === "/api/ingest") {
        if (rec.headers.authorization !== "Bearer tok7:s3cret") return json(401, { error: { code: "bad-token", message: "unknown API token" } });
        if (state.ingestStatus !== 201) return json(state.ingestStatus, { error: { code: "unavailable", message: "try later" } });
        const form = await new Response(new Uint8Array(rec.body), { headers: { "content-type": String(rec.headers["content-type"]) } }).formData();
        const key = String(form.get("batchKey"));
        const report = JSON.parse(await (form.get("report") as File).text()) as ScanReport;
        const known = keys.get(key);
        if (known) return json(200, { batchId: known, created: false, files: report.files.length });
        keys.set(key, keys.size + 1);
        return json(201, { batchId: keys.size, created: true, files: report.files.length });
      }
      json(404, { error: { code: "not-found", message: rec.url } });
    });
  });
  await new Promise<void>((resolve) => server.listen(port, "127.0.0.1", resolve));
  state.url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  state.close = () => new Promise((resolve) => server.close(() => resolve()));
  return state;
}

const formOf = (r: Recorded): Promise<FormData> =>
  new Response(new Uint8Array(r.body), { headers: { "content-type": String(r.headers["content-type"]) } }).formData();

let dir: string;
let server: FakeServer | null = null;
const env = isolatedEnv();
const cli = (args: string[], extra: Record<string, string> = {}, input?: string) => runCli(args, { cwd: dir, env: { ...env, ...extra }, input });

function writeReport(name: string): string {
  const report = assembleReport(
    { tool: { name: "tidemark", version: "0.1.0" }, profile: { name: "access-copy" }, startedAt: "2026-01-15T10:00:00.000Z", finishedAt: "2026-01-15T10:00:01.000Z" },
    [
      {
        path: "tape-04.bwf",
        sizeBytes: 10,
        sha256: "a".repeat(64),
        format: { container: "bwf", encoding: "pcm", sampleRateHz: 48000, bitDepth: 24, channels: 1, durationSeconds: 1 },
        metadata: {},
        metrics: null,
        findings: [],
        verdict: "pass",
        error: null,
        spectrogram: null,
      },
    ],
  );
  const file = path.join(dir, name);
  writeFileSync(file, reportToJson(report));
  return file;
}

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-upload-"));
});
afterEach(async () => {
  await server?.close();
  server = null;
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("tidemark login", () => {
  it("signs in, creates a token with the session cookie and CSRF header, and stores it with mode 0600", async () => {
    server = await fakeServer();
    const r = await cli(["login", "--server", server.url, "--email", "r.pennant@harbourside.example", "--password-stdin", "--token-name", "desk 2"], {}, "correct horse\n");
    expect(r.stderr).toContain('token "desk 2" stored in');
    expect(r.exitCode).toBe(0);
    expect(server.requests.map((q) => `${q.method} ${q.url}`)).toEqual(["POST /api/session", "POST /api/tokens"]);
    expect(JSON.parse(server.requests[1].body.toString())).toEqual({ name: "desk 2" });
    const file = path.join(env.TIDEMARK_CONFIG_DIR, "login.json");
    expect(JSON.parse(readFileSync(file, "utf8"))).toEqual({ server: server.url, token: "tok7:s3cret" });
    // POSIX permission bits: owner read/write only.
    expect(statSync(file).mode & 0o777).toBe(0o600);
  });

  it("refuses a wrong password with the server's message and exit 2", async () => {
    server = await fakeServer();
    const r = await cli(["login", "--server", server.url, "--email", "r.pennant@harbourside.example", "--password-stdin"], { TIDEMARK_CONFIG_DIR: path.join(dir, "other-config") }, "wrong\n");
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/sign-in refused by .*: 401 bad-credentials: e-mail or password is wrong/);
  });
});

describe("tidemark upload", () => {
  it("uploads a report with the stored token; the same report again is the same batch", async () => {
    server = await fakeServer();
    const loginFile = path.join(env.TIDEMARK_CONFIG_DIR, "login.json");
    mkdirSync(path.dirname(loginFile), { recursive: true });
    writeFileSync(loginFile, JSON.stringify({ server: server.url, token: "tok7:s3cret" }));
    const reportFile = writeReport("day-14.json");
    const first = await cli(["upload", "day-14.json", "--collection", "Ferry Terminal Interviews 1978"]);
    expect(first.stderr).toMatch(/uploaded batch 1 to http:\/\/127\.0\.0\.1:\d+ \(1 file\(s\)\)/);
    expect(first.exitCode).toBe(0);
    const form = await formOf(server.requests[0]);
    expect(form.get("collection")).toBe("Ferry Terminal Interviews 1978");
    // Default batch key: SHA-256 (node:crypto) of the report's bytes.
    expect(form.get("batchKey")).toBe(createHash("sha256").update(readFileSync(reportFile)).digest("hex"));
    const again = await cli(["upload", "day-14.json", "--collection", "Ferry Terminal Interviews 1978"]);
    expect(again.exitCode).toBe(0);
    expect(again.stderr).toMatch(/batch 1 was already on .* \(same batch key\)/);
  });

  it("shows a refused token with how to log in, exits 5 (the bad-token code of every command), and does not retry", async () => {
    server = await fakeServer();
    writeReport("day-15.json");
    const r = await cli(["upload", "day-15.json", "--collection", "Lighthouse Choir Reels", "--server", server.url], { TIDEMARK_TOKEN: "tok9:wrong" });
    expect(r.exitCode).toBe(5);
    expect(r.stderr).toContain("401 bad-token: unknown API token");
    expect(r.stderr).toContain(`run tidemark login --server ${server.url}`);
    expect(server.requests).toHaveLength(1);
  });

  it("spools the batch when the server is unreachable, and upload --spool sends it later", async () => {
    const probe = await fakeServer();
    const url = probe.url;
    const port = Number(new URL(url).port);
    await probe.close();
    writeReport("day-16.json");
    const spoolEnv = { TIDEMARK_TOKEN: "tok7:s3cret", TIDEMARK_SPOOL_DIR: path.join(dir, "spool-16") };
    const down = await cli(["upload", "day-16.json", "--collection", "Lighthouse Choir Reels", "--server", url], spoolEnv);
    // Exit-code table (README): 4 = only spooled, never 0, with the command that sends it later.
    expect(down.exitCode).toBe(4);
    expect(down.stderr).toMatch(/did not answer after 5 attempts \(last: ECONNREFUSED\)/);
    expect(down.stderr).toContain("tidemark upload --spool");
    expect(readdirSync(spoolEnv.TIDEMARK_SPOOL_DIR)).toHaveLength(1);

    server = await fakeServer(port);
    const later = await cli(["upload", "--spool"], spoolEnv);
    expect(later.exitCode).toBe(0);
    expect(later.stderr).toMatch(/uploaded batch 1/);
    expect(readdirSync(spoolEnv.TIDEMARK_SPOOL_DIR)).toHaveLength(0);
    expect((await formOf(server.requests[0])).get("collection")).toBe("Lighthouse Choir Reels");
  });

  it("moves a spooled batch the server refuses (4xx) to rejected/ with the reason, never retries it, and reports it", async () => {
    const probe = await fakeServer();
    const url = probe.url;
    const port = Number(new URL(url).port);
    await probe.close();
    writeReport("day-17.json");
    const spoolEnv = { TIDEMARK_TOKEN: "tok7:s3cret", TIDEMARK_SPOOL_DIR: path.join(dir, "spool-17"), TIDEMARK_RETRY_BASE_MS: "1" };
    expect((await cli(["upload", "day-17.json", "--collection", "Lighthouse Choir Reels", "--server", url], spoolEnv)).exitCode).toBe(4);
    const [name] = readdirSync(spoolEnv.TIDEMARK_SPOOL_DIR);

    // The same batch key with other content: the server answers 409 (issue #19's batch-key conflict).
    server = await fakeServer(port);
    server.ingestStatus = 409;
    const refused = await cli(["upload", "--spool"], spoolEnv);
    expect(refused.exitCode).toBe(2);
    expect(server.requests).toHaveLength(1);
    expect(refused.stderr).toContain(`${name} was refused (409 unavailable: try later); moved to ${path.join(spoolEnv.TIDEMARK_SPOOL_DIR, "rejected", name)}`);
    expect(readdirSync(spoolEnv.TIDEMARK_SPOOL_DIR)).toEqual(["rejected"]);
    const reason = JSON.parse(readFileSync(path.join(spoolEnv.TIDEMARK_SPOOL_DIR, "rejected", name, "rejected.json"), "utf8"));
    expect(reason).toMatchObject({ status: 409, code: "unavailable", message: "409 unavailable: try later", server: url });

    // Sent again: nothing is retried, the refused batch is still reported.
    server.ingestStatus = 201;
    const again = await cli(["upload", "--spool"], spoolEnv);
    expect(server.requests).toHaveLength(1);
    expect(again.stderr).toContain("1 batch(es) the server refused wait in");
    expect(again.stderr).toContain(`${name}: 409 unavailable: try later (${url}, `);
  });
});

describe("tidemark scan --upload", () => {
  it("uploads the JSON report and the PNGs as <n>.png parts, n the file's index in report.files", async () => {
    server = await fakeServer();
    const rate = 48000;
    mkdirSync(path.join(dir, "reels"), { recursive: true });
    for (const [i, f] of [440, 880].entries()) {
      writeFileSync(path.join(dir, "reels", `reel-${i}.wav`), encodeWav([sine({ frequencyHz: f, sampleRateHz: rate, seconds: 1, peakDbfs: -12 })], { sampleRateHz: rate, bitDepth: 24 }));
    }
    writeFileSync(path.join(dir, "reels", "reel-2.wav"), "not audio");
    const r = await cli(
      ["scan", "reels", "--spectrograms", "png", "--upload", "--server", server.url, "--batch-key", "harbourside-day-17", "--format", "json", "-q"],
      { TIDEMARK_TOKEN: "tok7:s3cret" },
    );
    // Delivered; one file could not be read and none failed: exit 3 (README's exit-code table).
    expect(r.exitCode).toBe(3);
    expect(r.stderr).toMatch(/uploaded batch \d+ to .* \(3 file\(s\)\)/);
    const form = await formOf(server.requests[0]);
    expect(form.get("collection")).toBe("reels");
    expect(form.get("batchKey")).toBe("harbourside-day-17");
    const sent = JSON.parse(await (form.get("report") as File).text()) as ScanReport;
    expect(sent.files.map((f) => f.path)).toEqual(["reel-0.wav", "reel-1.wav", "reel-2.wav"]);
    expect(withoutTime(sent)).toEqual(withoutTime(JSON.parse(r.stdout) as ScanReport));
    const names = (field: string) => form.getAll(field).map((v) => (v as File).name);
    expect(names("spectrogram")).toEqual(["0.png", "1.png"]);
    expect(names("waveform")).toEqual(["0.png", "1.png"]);
    const png = new Uint8Array(await (form.getAll("spectrogram")[1] as File).arrayBuffer());
    expect(png).toEqual(new Uint8Array(readFileSync(path.join(dir, "png", "reel-1.wav.png"))));
  });

  it("uploads the close-up parts named as CONTRACT-16 §4 says: levelGrid/loudnessCurve <n>.json, closeups <n>.<k>.png and .wav", async () => {
    server = await fakeServer();
    const rate = 48000;
    mkdirSync(path.join(dir, "ferry"), { recursive: true });
    const voice = sine({ frequencyHz: 220, sampleRateHz: rate, seconds: 6, peakDbfs: -12 });
    voice.fill(0, 3 * rate, 3 * rate + Math.round(0.04 * rate)); // a 40 ms dropout in the middle
    writeFileSync(path.join(dir, "ferry", "interview.wav"), encodeWav([voice], { sampleRateHz: rate, bitDepth: 16 }));
    const tmp = mkdtempSync(path.join(tmpdir(), "tidemark-tmp-"));
    const r = await cli(["scan", "ferry", "--upload", "--server", server.url, "--format", "json", "-q"], { TIDEMARK_TOKEN: "tok7:s3cret", TMPDIR: tmp });
    expect(r.exitCode, r.stderr).toBe(1);
    const form = await formOf(server.requests[0]);
    const files = (field: string) => form.getAll(field) as File[];
    const sent = JSON.parse(await (form.get("report") as File).text()) as ScanReport;
    expect(sent.files[0].closeups).toHaveLength(1);
    expect(files("levelGrid").map((f) => f.name)).toEqual(["0.json"]);
    expect(JSON.parse(await files("levelGrid")[0].text()).schema).toBe("tidemark.level-grid/1");
    expect(files("loudnessCurve").map((f) => f.name)).toEqual(["0.json"]);
    expect(JSON.parse(await files("loudnessCurve")[0].text()).schema).toBe("tidemark.loudness-curve/1");
    expect(files("closeupSpectrogram").map((f) => f.name)).toEqual(["0.0.png"]);
    expect(files("closeupWaveform").map((f) => f.name)).toEqual(["0.0.png"]);
    expect(files("excerpt").map((f) => [f.name, f.type])).toEqual([["0.0.wav", "audio/wav"]]);
    // RIFF….WAVE magic (Microsoft RIFF/WAVE layout) and a PNG pngjs decodes.
    const wav = Buffer.from(await files("excerpt")[0].arrayBuffer());
    expect([wav.toString("latin1", 0, 4), wav.toString("latin1", 8, 12)]).toEqual(["RIFF", "WAVE"]);
    expect(PNG.sync.read(Buffer.from(await files("closeupSpectrogram")[0].arrayBuffer())).height).toBe(300);
    // The printed report points at none of the files drawn only for the upload.
    const printed = (JSON.parse(r.stdout) as ScanReport).files[0];
    for (const key of ["levelGrid", "loudnessCurve", "closeups", "closeupsOmitted"]) expect(printed).not.toHaveProperty(key);
    rmSync(tmp, { recursive: true, force: true });
  });

  it("draws and uploads the PNGs even without --spectrograms, and leaves no temporary folder behind", async () => {
    server = await fakeServer();
    mkdirSync(path.join(dir, "tapes"), { recursive: true });
    writeFileSync(
      path.join(dir, "tapes", "tape-1.wav"),
      encodeWav([sine({ frequencyHz: 330, sampleRateHz: 48000, seconds: 1, peakDbfs: -12 })], { sampleRateHz: 48000, bitDepth: 24 }),
    );
    const tmp = mkdtempSync(path.join(tmpdir(), "tidemark-tmp-"));
    const r = await cli(["scan", "tapes", "--upload", "--server", server.url, "--format", "json", "-q"], { TIDEMARK_TOKEN: "tok7:s3cret", TMPDIR: tmp });
    expect(r.exitCode, r.stderr).toBe(0);
    const form = await formOf(server.requests[0]);
    const spectrogram = form.getAll("spectrogram") as File[];
    expect(spectrogram.map((f) => f.name)).toEqual(["0.png"]);
    expect((form.getAll("waveform") as File[]).map((f) => f.name)).toEqual(["0.png"]);
    // A real PNG (signature per ISO/IEC 15948:2004, 5.2), decodable by pngjs at the default 1600×600.
    const bytes = Buffer.from(await spectrogram[0].arrayBuffer());
    expect(PNG.sync.read(bytes).width).toBe(1600);
    // The printed report does not point at images the user never asked for …
    expect((JSON.parse(r.stdout) as ScanReport).files[0].spectrogram).toBeNull();
    // … and the folder they were drawn in is gone.
    expect(readdirSync(tmp).filter((n) => n.startsWith("tidemark-images-"))).toEqual([]);
    rmSync(tmp, { recursive: true, force: true });
  });
});

function withoutTime(report: ScanReport): unknown {
  const { startedAt: _s, finishedAt: _f, ...rest } = report;
  return rest;
}
