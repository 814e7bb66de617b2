/** Terminal questions for login: a plain line, a hidden password, or all of stdin (--password-stdin). */
import { createInterface } from "node:readline/promises";
import { EXIT_CODES, ExitError } from "../errors.ts";
import type { CliIo } from "../io.ts";

export async function promptLine(question: string, io: CliIo): Promise<string> {
  const rl = createInterface({ input: io.stdin, output: io.stderr as NodeJS.WritableStream, terminal: true });
  try {
    return (await rl.question(question)).trim();
  } finally {
    rl.close();
  }
}

/** Reads a line without echoing it; Ctrl-C aborts with exit 130. */
export function promptHidden(question: string, io: CliIo): Promise<string> {
  const stdin = io.stdin as NodeJS.ReadStream;
  io.stderr.write(question);
  return new Promise((resolve, reject) => {
    let value = "";
    const done = (error: Error | null): void => {
      stdin.setRawMode?.(false);
      stdin.pause();
      stdin.off("data", onData);
      io.stderr.write("\n");
      if (error) reject(error);
      else resolve(value);
    };
    const onData = (chunk: Buffer): void => {
      for (const ch of chunk.toString("utf8")) {
        if (ch === "\r" || ch === "\n") return done(null);
        if (ch === "\u0003") return done(new ExitError(EXIT_CODES.interrupted, "login cancelled"));
        if (ch === "\u007f" || ch === "\b") value = value.slice(0, -1);
        else value += ch;
      }
    };
    stdin.setRawMode?.(true);
    stdin.resume();
    stdin.on("data", onData);
  });
}

export async function readAllStdin(io: CliIo): Promise<string> {
  const chunks: Buffer[] = [];
  for await (const chunk of io.stdin) chunks.push(Buffer.isBuffer(chunk) ? chunk : Buffer.from(String(chunk)));
  return Buffer.concat(chunks).toString("utf8");
}
