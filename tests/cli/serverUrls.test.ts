/**
 * Wrong server URLs and bad tokens, as `worker` and `enqueue` meet them, with the real binary: a port with
 * nothing listening (retried for the bounded time, TIDEMARK_RETRY_SECONDS, then exit 6), https:// against
 * plain HTTP and a foreign web server answering HTML (exit 6 at once, naming the URL and the likely
 * mistake, no HTML dumped), a refused token (exit 5 from every command, with "run tidemark login"), and an
 * empty enqueue (exit 2, no request sent, so no run and no batch).
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { createServer, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { isolatedEnv, runCli } from "./runCli.ts";

let dir: string;
let folder: string;
const servers: Server[] = [];

/** A loopback HTTP server answering every request the same way; returns its URL and a request count. */
async function answering(status: number, contentType: string, body: string): Promise<{ url: string; requests: () => number }> {
  let count = 0;
  const server = createServer((req, res) => {
    count += 1;
    req.resume();
    req.on("end", () => res.writeHead(status, { "content-type": contentType }).end(body));
  });
  servers.push(server);
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  return { url: `http://127.0.0.1:${(server.address() as AddressInfo).port}`, requests: () => count };
}

async function deadUrl(): Promise<string> {
  const probe = createServer();
  await new Promise<void>((resolve) => probe.listen(0, "127.0.0.1", resolve));
  const { port } = probe.address() as AddressInfo;
  await new Promise((resolve) => probe.close(resolve));
  return `http://127.0.0.1:${port}`;
}

const env = (extra: Record<string, string> = {}) => isolatedEnv({ TIDEMARK_TOKEN: "tok7:s3cret", TIDEMARK_RETRY_SECONDS: "2", TIDEMARK_RETRY_BASE_MS: "100", ...extra });

async function timed(args: string[], extra: Record<string, string> = {}): Promise<{ exitCode: number; stderr: string; seconds: number }> {
  const started = Date.now();
  const r = await runCli(args, { cwd: dir, env: env(extra) });
  return { exitCode: r.exitCode, stderr: r.stderr, seconds: (Date.now() - started) / 1000 };
}

const worker = (url: string) => timed(["worker", "--server", url, "--name", "w-url", "--quiet"]);
const enqueue = (url: string, target = folder) => timed(["enqueue", target, "--server", url, "--collection", "Ferry Terminal Interviews 1978"]);

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-urls-"));
  folder = path.join(dir, "reels");
  mkdirSync(folder);
  writeFileSync(path.join(folder, "reel-1.wav"), encodeWav([sine({ frequencyHz: 440, sampleRateHz: 8000, seconds: 0.5, peakDbfs: -12 })], { sampleRateHz: 8000, bitDepth: 16 }));
  mkdirSync(path.join(dir, "empty"));
});
afterAll(async () => {
  await Promise.all(servers.map((s) => new Promise((r) => s.close(r))));
  rmSync(dir, { recursive: true, force: true });
});

describe.each([
  ["worker", worker],
  ["enqueue", enqueue],
] as const)("tidemark %s", (command, run) => {
  it("gives up on a port with nothing listening after the bounded retry time, exit 6", { timeout: 30_000 }, async () => {
    const url = await deadUrl();
    const r = await run(url);
    expect(r.exitCode, r.stderr).toBe(6);
    expect(r.stderr).toMatch(/ECONNREFUSED/);
    expect(r.stderr).toMatch(/nothing is listening at that address and port|within 2 s/);
    // TIDEMARK_RETRY_SECONDS=2, plus start-up.
    expect(r.seconds).toBeLessThan(2 + 8);
  });

  it("stops at once on https:// against a plain HTTP server, exit 6, suggesting http://", { timeout: 30_000 }, async () => {
    const plain = await answering(200, "application/json", "{}");
    const r = await run(plain.url.replace("http://", "https://"));
    expect(r.exitCode, r.stderr).toBe(6);
    expect(r.stderr).toMatch(/the TLS handshake failed .*try http:\/\/ instead of https:\/\//);
    expect(r.seconds).toBeLessThan(8);
  });

  it("stops at once on a foreign web server answering HTML, exit 6, without dumping the page", { timeout: 30_000 }, async () => {
    const page = "<!DOCTYPE html><html><head><title>Harbourside intranet</title></head><body><h1>404 Not Found</h1>" + "<p>padding</p>".repeat(200) + "</body></html>";
    const foreign = await answering(404, "text/html; charset=utf-8", page);
    const r = await run(foreign.url);
    expect(r.exitCode, r.stderr).toBe(6);
    expect(r.stderr).toContain(`answered 404 Not Found with text/html; charset=utf-8`);
    expect(r.stderr).toMatch(/not Tidemark's JSON: is http:\/\/127\.0\.0\.1:\d+ the Tidemark server's address and port\?/);
    expect(r.stderr).not.toContain("<html");
    expect(r.stderr.length).toBeLessThan(1000);
    expect(foreign.requests()).toBe(1);
    expect(r.seconds).toBeLessThan(8);
  });

  it(`exits 5 with "run tidemark login" when the server refuses the token`, { timeout: 30_000 }, async () => {
    const refusing = await answering(401, "application/json", JSON.stringify({ error: { code: "invalid_token", message: "the API token is not valid" } }));
    const r = await run(refusing.url);
    expect(r.exitCode, r.stderr).toBe(5);
    expect(r.stderr).toContain(`run tidemark login --server ${refusing.url}`);
    expect(refusing.requests()).toBe(1);
    expect(command === "worker" || r.stderr.includes("refused the API token (invalid_token")).toBe(true);
  });
});

it("exits 5 with the same advice when there is no token at all", async () => {
  const r = await runCli(["worker", "--server", "http://127.0.0.1:9"], { cwd: dir, env: isolatedEnv() });
  expect(r.exitCode).toBe(5);
  expect(r.stderr).toContain("run tidemark login --server http://127.0.0.1:9");
});

it("enqueues nothing from an empty folder: exit 2, no request, so no run and no batch", async () => {
  const server = await answering(500, "application/json", "{}");
  const r = await enqueue(server.url, path.join(dir, "empty"));
  expect(r.exitCode).toBe(2);
  expect(r.stderr).toMatch(/nothing to enqueue: no files matching .* under .*empty; no run was created/);
  expect(server.requests()).toBe(0);
});
