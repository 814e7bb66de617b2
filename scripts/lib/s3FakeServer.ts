/**
 * The s3rver process that scripts/lib/s3Fake.ts starts (run it through that, not by hand). It runs with
 * --openssl-legacy-provider: s3rver 3.7 encrypts ListObjectsV2 continuation tokens with DES, which Node 17+
 * only offers from OpenSSL's legacy provider (without it a truncated listing fails with a 500).
 *
 * Argument: one JSON object {dir, bucket, host, port, logRequests}. Writes JSON lines to stdout:
 * {"listening": "http://host:port"} once, then with logRequests {"request": {method, url, authorization, range, userAgent}}.
 */
import { mkdirSync } from "node:fs";
import { createServer } from "node:http";
import S3rver from "s3rver";
import { z } from "zod";

const argsSchema = z.object({ dir: z.string().min(1), bucket: z.string().min(3), host: z.string(), port: z.number().int().min(0).max(65535), logRequests: z.boolean() });
const args = argsSchema.parse(JSON.parse(process.argv[2] ?? "null"));
const send = (line: object): void => void process.stdout.write(JSON.stringify(line) + "\n");

mkdirSync(args.dir, { recursive: true });
const s3rver = new S3rver({
  directory: args.dir,
  silent: true,
  // Path-style only: a loopback address has no bucket subdomains.
  vhostBuckets: false,
  configureBuckets: [{ name: args.bucket, configs: [] }],
});
await s3rver.configureBuckets();
// Our own HTTP server around s3rver's handler: it listens where we say, and requests can be logged.
const handle = s3rver.callback();
const server = createServer((req, res) => {
  if (args.logRequests) {
    const h = req.headers;
    send({ request: { method: req.method ?? "", url: req.url ?? "", authorization: h.authorization ?? "", range: h.range ?? null, userAgent: h["user-agent"] ?? "" } });
  }
  handle(req, res);
});
server.listen(args.port, args.host, () => {
  const address = server.address();
  send({ listening: `http://${args.host}:${typeof address === "object" && address ? address.port : args.port}` });
});
for (const signal of ["SIGTERM", "SIGINT"] as const) {
  process.on(signal, () => {
    server.close(() => process.exit(0));
    server.closeAllConnections();
  });
}
