/**
 * A local SMTP server for development and tests: accepts every message and stores it as a .eml file
 * (the raw RFC 5322 message) in a folder, default .data/mail. No TLS, no authentication: loopback only.
 */
import { randomBytes } from "node:crypto";
import { createWriteStream, mkdirSync } from "node:fs";
import { rename } from "node:fs/promises";
import path from "node:path";
import { pipeline } from "node:stream/promises";
import { SMTPServer } from "smtp-server";

export interface SmtpFake {
  port: number;
  dir: string;
  /** smtp://127.0.0.1:<port> for SMTP_URL. */
  url: string;
  close(): Promise<void>;
}

export async function startSmtpFake({ dir, port = 0, host = "127.0.0.1" }: { dir: string; port?: number; host?: string }): Promise<SmtpFake> {
  mkdirSync(dir, { recursive: true });
  let seq = 0;
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["AUTH", "STARTTLS"],
    logger: false,
    size: 25 * 1024 * 1024,
    // Stopping waits this long at most for open connections (a stack shutdown has 10 s in all).
    closeTimeout: 2000,
    onData(stream, _session, callback) {
      // Sortable names: arrival order is the listing order.
      const name = `${Date.now()}-${String(++seq).padStart(4, "0")}-${randomBytes(3).toString("hex")}.eml`;
      const file = path.join(dir, name);
      // Write under a dot-name first so readers never pick up half a message.
      const partial = path.join(dir, `.${name}.part`);
      pipeline(stream, createWriteStream(partial))
        .then(() => rename(partial, file))
        .then(() => callback())
        .catch((e: unknown) => callback(e instanceof Error ? e : new Error(String(e))));
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(port, host, () => {
      server.off("error", reject);
      resolve();
    });
  });
  const address = server.server.address();
  const boundPort = typeof address === "object" && address ? address.port : port;
  return {
    port: boundPort,
    dir,
    url: `smtp://${host}:${boundPort}`,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
