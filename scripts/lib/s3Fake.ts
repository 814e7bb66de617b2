/**
 * A local S3-compatible service for `npm start -- --s3` and the S3 driver's tests: s3rver (npm) on loopback,
 * in a child process of its own (scripts/lib/s3FakeServer.ts, see there why), keeping its objects as files
 * under `dir`. It accepts only its one built-in access key id (a V4 signature's key id is checked; the
 * signature itself is not recomputed).
 */
import { spawn } from "node:child_process";
import { createInterface } from "node:readline";
import { fileURLToPath } from "node:url";
import { z } from "zod";
import { projectRoot } from "./paths.ts";

/** s3rver's built-in account: the only access key id it accepts. */
export const S3_FAKE_CREDENTIALS = { accessKeyId: "S3RVER", secretAccessKey: "S3RVER" } as const;

const SERVER_SCRIPT = fileURLToPath(new URL("./s3FakeServer.ts", import.meta.url));
const START_LIMIT_MS = 30_000;

const requestSchema = z.object({ method: z.string(), url: z.string(), authorization: z.string(), range: z.string().nullable(), userAgent: z.string() });
const lineSchema = z.object({ listening: z.string().optional(), request: requestSchema.optional() });
export type S3FakeRequest = z.infer<typeof requestSchema>;

export interface S3FakeOptions {
  /** Where the buckets and objects are kept (created if missing; kept across starts). */
  dir: string;
  /** Created on start if it does not exist. */
  bucket: string;
  host?: string;
  /** 0 (the default): any free port. */
  port?: number;
  /** Sees each request (method, URL, some headers) as it arrives; for tests. */
  onRequest?: (request: S3FakeRequest) => void;
  /** Its own process group (for a supervisor that passes Ctrl-C on itself). */
  detached?: boolean;
}

export interface S3Fake {
  /** http://host:port, for the S3 client's endpoint (path-style addressing). */
  endpoint: string;
  bucket: string;
  pid: number;
  /** Resolves once the process has exited (also when it dies on its own). */
  exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  /** With onRequest: resolves once every request sent before the call has been passed to it. */
  flushRequests(): Promise<void>;
  close(): Promise<void>;
}

/** Requests to this path only mark a point in the request log. */
const FLUSH_PATH = "/tidemark-flush/";

export async function startS3Fake(options: S3FakeOptions): Promise<S3Fake> {
  const args = { dir: options.dir, bucket: options.bucket, host: options.host ?? "127.0.0.1", port: options.port ?? 0, logRequests: Boolean(options.onRequest) };
  // setpriv --pdeathsig: the service goes when its parent does, however the parent ends.
  const child = spawn("setpriv", ["--pdeathsig", "SIGTERM", process.execPath, "--openssl-legacy-provider", "--import", "tsx", SERVER_SCRIPT, JSON.stringify(args)], {
    // From the repository root, where `--import tsx` resolves.
    cwd: projectRoot,
    stdio: ["ignore", "pipe", "pipe"],
    detached: options.detached ?? false,
  });
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => child.once("exit", (code, signal) => resolve({ code, signal })));
  const flushed = new Map<string, () => void>();
  let flushes = 0;
  let stderr = "";
  child.stderr.on("data", (c: Buffer) => (stderr = (stderr + c.toString()).slice(-4000)));
  const endpoint = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`s3rver did not start within ${START_LIMIT_MS / 1000} s: ${stderr}`)), START_LIMIT_MS);
    void exited.then(({ code, signal }) => reject(new Error(`s3rver exited before listening (${signal ?? `exit code ${code}`}): ${stderr}`)));
    createInterface({ input: child.stdout }).on("line", (line) => {
      const message = lineSchema.parse(JSON.parse(line));
      if (message.listening) {
        clearTimeout(timer);
        resolve(message.listening);
      } else if (message.request?.url.startsWith(FLUSH_PATH)) flushed.get(message.request.url)?.();
      else if (message.request) options.onRequest?.(message.request);
    });
  });
  return {
    endpoint,
    bucket: options.bucket,
    pid: child.pid!,
    exited,
    async flushRequests() {
      if (!options.onRequest) return;
      // The service logs requests in the order they arrive, so once the marker's line is read, so are all before it.
      const url = `${FLUSH_PATH}${++flushes}`;
      const seen = new Promise<void>((resolve) => flushed.set(url, resolve));
      await fetch(endpoint + url).then((r) => r.arrayBuffer());
      await seen;
      flushed.delete(url);
    },
    async close() {
      if (child.exitCode === null && child.signalCode === null) child.kill("SIGTERM");
      await exited;
    },
  };
}
