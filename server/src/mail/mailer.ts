/**
 * Outgoing e-mail through nodemailer. With SMTP_URL it speaks SMTP; without it, each message is written
 * to the mail folder as a .eml file, so a laptop without a mail server still shows what would be sent.
 * Sending never blocks or fails the request that caused it: failures are logged.
 */
import { randomBytes } from "node:crypto";
import { mkdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import nodemailer, { type Transporter } from "nodemailer";
import type { Logger } from "../logger.ts";

export interface MailMessage {
  to: string[];
  subject: string;
  text: string;
}

export interface Mailer {
  /** Queues a message; resolves at once. */
  send(message: MailMessage): void;
  /** Resolves when every queued message has been handed over (tests, shutdown). */
  idle(): Promise<void>;
  close(): void;
}

export interface MailerOptions {
  smtpUrl: string | null;
  from: string;
  mailDir: string;
  logger: Logger;
}

export function createMailer({ smtpUrl, from, mailDir, logger }: MailerOptions): Mailer {
  const transport: Transporter = smtpUrl
    ? nodemailer.createTransport(smtpUrl)
    : nodemailer.createTransport({ streamTransport: true, buffer: true, newline: "windows" });
  const pending = new Set<Promise<void>>();

  async function deliver(message: MailMessage): Promise<void> {
    const info = await transport.sendMail({ from, to: message.to, subject: message.subject, text: message.text });
    if (!smtpUrl) {
      mkdirSync(mailDir, { recursive: true });
      const name = `${Date.now()}-${randomBytes(3).toString("hex")}.eml`;
      writeFileSync(path.join(mailDir, name), (info as unknown as { message: Buffer }).message);
    }
  }

  return {
    send(message) {
      if (message.to.length === 0) return;
      const job = deliver(message)
        .catch((e: unknown) => logger.error(`mail "${message.subject}" to ${message.to.join(", ")} failed: ${String(e)}`))
        .finally(() => pending.delete(job));
      pending.add(job);
    },
    async idle() {
      while (pending.size > 0) await Promise.allSettled([...pending]);
    },
    close() {
      transport.close();
    },
  };
}
