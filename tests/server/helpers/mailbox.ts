/** Reads the .eml files the SMTP fake stored: headers (unfolded) and the decoded text body. */
import { existsSync, readdirSync, readFileSync } from "node:fs";
import path from "node:path";

export interface ReceivedMail {
  file: string;
  headers: Record<string, string>;
  subject: string;
  to: string[];
  text: string;
}

function decodeQuotedPrintable(body: string): string {
  // RFC 2045 §6.7: soft line breaks, then =XX octets (UTF-8).
  const joined = body.replace(/=\r?\n/g, "");
  const bytes: number[] = [];
  for (let i = 0; i < joined.length; i++) {
    if (joined[i] === "=" && /^[0-9A-F]{2}$/i.test(joined.slice(i + 1, i + 3))) {
      bytes.push(parseInt(joined.slice(i + 1, i + 3), 16));
      i += 2;
    } else bytes.push(...Buffer.from(joined[i]));
  }
  return Buffer.from(bytes).toString("utf8");
}

export function parseEml(file: string): ReceivedMail {
  const raw = readFileSync(file, "utf8");
  const split = raw.search(/\r?\n\r?\n/);
  const head = raw.slice(0, split).replace(/\r?\n[ \t]+/g, " ");
  const body = raw.slice(split).replace(/^\r?\n\r?\n/, "");
  const headers: Record<string, string> = {};
  for (const line of head.split(/\r?\n/)) {
    const at = line.indexOf(":");
    if (at > 0) headers[line.slice(0, at).toLowerCase()] = line.slice(at + 1).trim();
  }
  const encoding = (headers["content-transfer-encoding"] ?? "7bit").toLowerCase();
  const text = encoding === "quoted-printable" ? decodeQuotedPrintable(body) : encoding === "base64" ? Buffer.from(body, "base64").toString("utf8") : body;
  const to = (headers.to ?? "").split(",").map((a) => (/<([^>]+)>/.exec(a)?.[1] ?? a).trim()).filter(Boolean);
  return { file, headers, subject: headers.subject ?? "", to, text: text.replace(/\r\n/g, "\n") };
}

export function readMailbox(dir: string): ReceivedMail[] {
  if (!existsSync(dir)) return [];
  return readdirSync(dir)
    .filter((n) => n.endsWith(".eml"))
    .sort()
    .map((n) => parseEml(path.join(dir, n)));
}

export async function waitForMail(dir: string, count: number, timeoutMs = 10_000): Promise<ReceivedMail[]> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const mail = readMailbox(dir);
    if (mail.length >= count) return mail;
    if (Date.now() > until) throw new Error(`expected ${count} message(s) in ${dir}, found ${mail.length}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}
