/**
 * Debian's chromium through playwright-core, one fresh profile per signed-in role so their cookies
 * never mix. Screenshots go to TIDEMARK_SCREENSHOT_DIR, or a new temp folder printed on first use.
 */
import { mkdirSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { chromium, type BrowserContext, type Page } from "playwright-core";
import type { Role } from "@tidemark/shared/types/api";

const CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"];

export interface RoleBrowser {
  context: BrowserContext;
  page: Page;
  close(): Promise<void>;
}

/** playwright refuses --user-data-dir in args; a persistent context on a fresh temp dir is the same thing. */
export async function openBrowser(viewport = { width: 1280, height: 900 }): Promise<RoleBrowser> {
  const profile = mkdtempSync(path.join(tmpdir(), "tidemark-chromium-"));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
    args: CHROMIUM_ARGS,
    viewport,
    acceptDownloads: true,
  });
  const page = context.pages()[0] ?? (await context.newPage());
  // A blank page in a screenshot says little; the browser's own complaints say why.
  page.on("pageerror", (error) => console.error(`[browser] page error: ${error.message}`));
  page.on("console", (message) => {
    // Refused requests (the 401 of a signed-out session check) are logged by the browser itself; skip those.
    if (message.type() === "error" && !message.text().startsWith("Failed to load resource")) console.error(`[browser] console: ${message.text()}`);
  });
  return {
    context,
    page,
    async close() {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

export function emailOf(role: Role): string {
  return `${role}@harbourside.test`;
}

let shotDir: string | null = null;
export function screenshotDir(): string {
  if (!shotDir) {
    shotDir = process.env.TIDEMARK_SCREENSHOT_DIR ?? mkdtempSync(path.join(tmpdir(), "tidemark-e2e-shots-"));
    mkdirSync(shotDir, { recursive: true });
    console.error(`[e2e] screenshots in ${shotDir}`);
  }
  return shotDir;
}

export async function screenshot(page: Page, name: string): Promise<string> {
  const file = path.join(screenshotDir(), `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

/** A JSON call made from inside the page, with its session cookie and the CSRF header, as the portal makes it. */
export function apiFrom<T = unknown>(page: Page, method: string, url: string, body?: unknown): Promise<{ status: number; body: T }> {
  return page.evaluate(
    async ({ method, url, body }) => {
      const res = await fetch(url, {
        method,
        headers: { "content-type": "application/json", "x-tidemark-request": "1" },
        body: body === undefined ? undefined : JSON.stringify(body),
      });
      return { status: res.status, body: await res.json().catch(() => null) };
    },
    { method, url, body },
  ) as Promise<{ status: number; body: T }>;
}
