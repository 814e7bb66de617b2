/**
 * The portal in a real browser against the real server, database and demo seed: each role signs in,
 * a supervisor reviews a failing file, and an auditor stays read-only but can export.
 */
import { existsSync, readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import type { FileSummaryDto, Page as ApiPage, Role } from "@tidemark/shared/types/api";
import { apiFrom, emailOf, openBrowser, screenshot, type RoleBrowser } from "./browser.ts";
import { backgroundIdle } from "../../server/src/services/background.ts";
import { DEMO_PASSWORD, startPortalStack, type PortalStack } from "./portalStack.ts";

let stack: PortalStack;
const browsers: RoleBrowser[] = [];
/** A failing file not yet flagged (the seed reviews some), found through the API as the supervisor sees it. */
let target: FileSummaryDto;

async function signIn(role: Role, startPath = "/batches", viewport?: { width: number; height: number }): Promise<Page> {
  const browser = await openBrowser(viewport);
  browsers.push(browser);
  const { page } = browser;
  await page.goto(stack.baseUrl + startPath);
  await page.getByRole("heading", { name: "Sign in" }).waitFor();
  await page.getByLabel("E-mail").fill(emailOf(role));
  await page.getByLabel("Password").fill(DEMO_PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => url.pathname + url.search === startPath);
  return page;
}

/** Resolves once the browser has decoded the image: a broken or empty PNG keeps naturalWidth at 0. */
async function expectImageDecoded(page: Page, altStartsWith: string): Promise<number> {
  const img = page.locator(`img[alt^="${altStartsWith}"]`);
  await img.waitFor();
  await page.waitForFunction((prefix) => {
    const el = document.querySelector<HTMLImageElement>(`img[alt^="${prefix}"]`);
    return el !== null && el.complete && el.naturalWidth > 0;
  }, altStartsWith);
  return img.evaluate((el: HTMLImageElement) => el.naturalWidth);
}

/** A comment in the thread (not the text still in the box while the post settles). */
function postedComment(page: Page, text: string | RegExp) {
  return page.getByRole("region", { name: /^Comments/ }).getByRole("listitem").filter({ hasText: text });
}


/** The reset link from the newest mail to `to`, undoing quoted-printable line folding and escapes. */
function resetLinkFor(to: string): string {
  const files = existsSync(stack.mailDir) ? readdirSync(stack.mailDir).filter((f) => f.endsWith(".eml")).sort() : [];
  for (const name of files.reverse()) {
    const raw = readFileSync(path.join(stack.mailDir, name), "utf8");
    if (!raw.includes(to)) continue;
    const text = raw.replace(/=\r?\n/g, "").replace(/=([0-9A-F]{2})/g, (_, hex: string) => String.fromCharCode(parseInt(hex, 16)));
    const match = /https?:\/\/\S+\/reset-password\?token=[^\s"<>]+/.exec(text);
    if (match) return match[0];
  }
  throw new Error(`no password-reset mail to ${to} in ${stack.mailDir}`);
}

beforeAll(async () => {
  stack = await startPortalStack((line) => console.error(`[e2e] ${line}`));
});

afterAll(async () => {
  for (const b of browsers.splice(0)) await b.close();
  await stack?.stop();
});

describe("review portal in chromium", () => {
  it.each<[Role, string[]]>([
    ["admin", ["Batches", "Files", "Runs", "Exports", "Audit trail", "API tokens", "Users"]],
    ["supervisor", ["Batches", "Files", "Runs", "Exports", "Audit trail", "API tokens"]],
    ["technician", ["Batches", "Files", "Runs", "API tokens"]],
    ["auditor", ["Batches", "Files", "Runs", "Exports", "Audit trail"]],
  ])("signs in as %s and shows the seeded batches with that role's navigation", async (role, nav) => {
    const page = await signIn(role);
    await expect.poll(() => page.getByRole("navigation", { name: "Main" }).getByRole("link").allTextContents()).toEqual(nav);
    await page.getByRole("link", { name: /^#\d+$/ }).first().waitFor();
    expect(await page.getByRole("cell", { name: "Ferry Terminal Interviews 1978" }).count()).toBeGreaterThan(0);
    await screenshot(page, `batches-${role}`);
  });

  it("lets a supervisor open a failing file, see its spectrogram, comment and flag it", async () => {
    const page = await signIn("supervisor", "/files?verdict=fail");
    const failing = await apiFrom(page, "GET", "/api/files?verdict=fail&sort=path&pageSize=100");
    expect(failing.status).toBe(200);
    const candidate = (failing.body as ApiPage<FileSummaryDto>).items.find((f) => f.reviewState !== "flagged");
    expect(candidate, "the demo seed should include a failing file that is not flagged yet").toBeDefined();
    target = candidate as FileSummaryDto;
    await screenshot(page, "files-supervisor-failing");

    // Keyboard: in its own batch, sorted by path, j moves down to the target's row and Enter opens it.
    const view = `batch=${target.batchId}&verdict=fail&sort=path&order=asc`;
    const rows = ((await apiFrom(page, "GET", `/api/files?${view}`)).body as ApiPage<FileSummaryDto>).items;
    const index = rows.findIndex((f) => f.id === target.id);
    expect(index).toBeGreaterThanOrEqual(0);
    await page.goto(`${stack.baseUrl}/files?${view}`);
    // The row links carry the list's query, so the file page's previous/next walk this same list.
    await page.locator(`a[href="/files/${target.id}?${view}"]`).waitFor();
    for (let i = 0; i <= index; i++) await page.keyboard.press("j");
    expect(await page.locator("[data-list-row]").nth(index).getAttribute("aria-current")).toBe("true");
    await page.keyboard.press("Enter");
    await page.waitForURL((url) => url.pathname === `/files/${target.id}` && url.search === `?${view}`);

    await page.getByRole("heading", { name: target.path }).waitFor();
    expect(await expectImageDecoded(page, "Spectrogram of")).toBeGreaterThan(0);
    await expectImageDecoded(page, "Waveform of");
    const markers = page.locator("[data-finding-marker]");
    if ((await markers.count()) > 0) {
      await markers.first().click();
      expect(await markers.first().getAttribute("aria-pressed")).toBe("true");
    }
    await screenshot(page, "file-supervisor-before-review");

    const comment = `Supervisor check ${Date.now()}: fault audible at the marker.`;
    await page.getByLabel("Add a comment").fill(comment);
    await page.getByRole("button", { name: "Post comment" }).click();
    await postedComment(page, comment).waitFor();

    const review = page.getByRole("form", { name: "Change review state" });
    await review.getByLabel("New review state").selectOption("flagged");
    await review.getByLabel(/Reason/).fill("clipping confirmed on the spectrogram");
    await review.getByRole("button", { name: "Save review state" }).click();
    await page.getByText("“clipping confirmed on the spectrogram”").waitFor();
    await screenshot(page, "file-supervisor-flagged");

    // Persisted on the server, not just in the cache.
    await page.reload();
    await page.getByRole("heading", { name: target.path }).waitFor();
    const current = page.getByRole("region", { name: "Review" }).locator("p", { hasText: "Current state:" });
    await expect.poll(() => current.textContent()).toContain("flagged");
    await postedComment(page, comment).waitFor();
  });

  it("shows a technician the comment but no review control, and lets them comment", async () => {
    expect(target, "runs after the supervisor test").toBeDefined();
    const page = await signIn("technician", `/files/${target.id}`);
    await postedComment(page, /fault audible at the marker/).waitFor();
    expect(await page.getByRole("form", { name: "Change review state" }).count()).toBe(0);
    await page.getByLabel("Add a comment").fill("Re-cleaning the heads before the next transfer.");
    await page.getByRole("button", { name: "Post comment" }).click();
    await postedComment(page, "Re-cleaning the heads before the next transfer.").waitFor();
  });

  it("keeps an auditor read-only: no review or comment controls, and the API refuses a flag", async () => {
    expect(target, "runs after the supervisor test").toBeDefined();
    const page = await signIn("auditor", `/files/${target.id}`);
    await page.getByRole("heading", { name: target.path }).waitFor();
    expect(await expectImageDecoded(page, "Spectrogram of")).toBeGreaterThan(0);
    expect(await page.getByRole("form", { name: "Change review state" }).count()).toBe(0);
    expect(await page.getByLabel("Add a comment").count()).toBe(0);
    await screenshot(page, "file-auditor");

    const patch = await apiFrom(page, "PATCH", `/api/files/${target.id}`, { reviewState: "accepted", reason: "auditor tries" });
    expect(patch.status).toBe(403);
    expect((patch.body as { error: { code: string } }).error.code).toBeTruthy();
    const comment = await apiFrom(page, "POST", `/api/files/${target.id}/comments`, { body: "auditor tries" });
    expect(comment.status).toBe(403);
  });

  it("lets an auditor download the files CSV and read the review in the audit trail", async () => {
    expect(target, "runs after the supervisor test").toBeDefined();
    const page = await signIn("auditor", "/exports");
    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Download CSV" }).click()]);
    const file = await download.path();
    const csv = readFileSync(file, "utf8");
    const [header, ...rows] = csv.trim().split(/\r?\n/);
    expect(header.split(",")).toContain("path");
    expect(rows.some((row) => row.includes(target.path))).toBe(true);
    await screenshot(page, "exports-auditor");

    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Audit trail" }).click();
    await page.getByLabel("Action").fill("file.review");
    await page.getByRole("button", { name: "Apply filters" }).click();
    await page.getByRole("cell", { name: "supervisor@harbourside.test" }).first().waitFor();
    await screenshot(page, "audit-auditor");
  });

  it("lets an auditor find a batch and download it as JSON, PDF and PREMIS", async () => {
    const page = await signIn("auditor", "/exports");
    const card = page.getByRole("region", { name: /Batch report/ });
    await card.getByLabel("Find a batch").fill("Ferry Terminal");
    const ferry = card.getByRole("radio", { name: /Ferry Terminal Interviews 1978/ }).first();
    await ferry.check();
    const [json] = await Promise.all([page.waitForEvent("download"), card.getByRole("link", { name: "JSON" }).click()]);
    const report = JSON.parse(readFileSync(await json.path(), "utf8")) as Record<string, unknown>;
    expect(JSON.stringify(report)).toContain("Ferry Terminal Interviews 1978");
    expect(JSON.stringify(report)).toMatch(/\.wav"/);
    const [pdf] = await Promise.all([page.waitForEvent("download"), card.getByRole("link", { name: "PDF" }).click()]);
    expect(readFileSync(await pdf.path()).subarray(0, 5).toString("latin1")).toBe("%PDF-");
    const [premis] = await Promise.all([page.waitForEvent("download"), card.getByRole("link", { name: "PREMIS XML" }).click()]);
    expect(readFileSync(await premis.path(), "utf8")).toContain('<premis xmlns="http://www.loc.gov/premis/v3" version="3.0"');
    await screenshot(page, "exports-batch-search");
  });

  it("lets a supervisor accept several files at once from the table", async () => {
    const page = await signIn("supervisor", "/files?verdict=pass&reviewState=pending");
    const boxes = page.getByRole("checkbox", { name: /^Select (?!all)/ });
    await boxes.first().waitFor();
    const count = Math.min(2, await boxes.count());
    for (let i = 0; i < count; i++) await boxes.nth(i).check();
    const bar = page.getByRole("form", { name: "Change review state of selected files" });
    await bar.getByLabel("New review state").selectOption("accepted");
    await bar.getByLabel("Reason").fill("levels and spectrum as expected");
    await screenshot(page, "files-supervisor-bulk");
    const before = (await apiFrom(page, "GET", "/api/files?verdict=pass&reviewState=pending&pageSize=1")).body as ApiPage<FileSummaryDto>;
    await bar.getByRole("button", { name: `Apply to ${count}` }).click();
    await bar.waitFor({ state: "detached" });
    const after = (await apiFrom(page, "GET", "/api/files?verdict=pass&reviewState=pending&pageSize=1")).body as ApiPage<FileSummaryDto>;
    expect(after.total).toBe(before.total - count);
  });

  it("lets a technician create an API token, shown once, and revoke it", async () => {
    const page = await signIn("technician", "/tokens");
    await page.getByLabel(/Token name/).fill("transfer-station-2");
    await page.getByRole("button", { name: "Create token" }).click();
    const secret = await page.getByTestId("new-token").textContent();
    expect(secret).toMatch(/.+:.+/);
    await screenshot(page, "tokens-technician");
    await page.getByRole("button", { name: "I have saved it" }).click();
    expect(await page.getByText(secret ?? "").count()).toBe(0);
    const row = page.getByRole("row").filter({ hasText: "transfer-station-2" });
    await row.getByRole("button", { name: "Revoke" }).click();
    await row.getByRole("button", { name: /Yes, revoke/ }).click();
    await row.getByText(/^revoked/).waitFor();
  });

  it("sends a user whose session ended to sign-in and back to the same view", async () => {
    const page = await signIn("supervisor", "/files?verdict=fail");
    await page.getByRole("link", { name: /\.wav$/ }).first().waitFor();
    await browsers[browsers.length - 1].context.clearCookies();
    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Batches" }).click();
    await page.getByText(/Your session ended/).waitFor();
    expect(new URL(page.url()).searchParams.get("next")).toBe("/batches");
    await page.getByLabel("E-mail").fill(emailOf("supervisor"));
    await page.getByLabel("Password").fill(DEMO_PASSWORD);
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.waitForURL((url) => url.pathname === "/batches");
  });

  it("works at tablet width", async () => {
    expect(target, "runs after the supervisor test").toBeDefined();
    const page = await signIn("supervisor", `/files/${target.id}`, { width: 800, height: 1100 });
    await page.getByRole("heading", { name: target.path }).waitFor();
    await expectImageDecoded(page, "Spectrogram of");
    // Nothing may stick out sideways: the page itself never scrolls horizontally.
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(800);
    await screenshot(page, "file-supervisor-tablet");
    await page.goto(`${stack.baseUrl}/files`);
    await page.getByRole("link", { name: /\.wav$/ }).first().waitFor();
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(800);
    await screenshot(page, "files-supervisor-tablet");
  });

  it("resets a forgotten password through the e-mailed link", async () => {
    const browser = await openBrowser();
    browsers.push(browser);
    const { page } = browser;
    await page.goto(`${stack.baseUrl}/sign-in`);
    await screenshot(page, "sign-in");
    await page.getByRole("link", { name: "Forgot your password?" }).click();
    await page.getByLabel("E-mail").fill(emailOf("admin"));
    await page.getByRole("button", { name: "Send reset link" }).click();
    await page.getByText(/a reset link is on its way/).waitFor();
    await backgroundIdle(); // the request is answered before its lookup and e-mail run
    await stack.mailer.idle();

    const link = resetLinkFor(emailOf("admin"));
    expect(new URL(link).origin).toBe(stack.baseUrl);
    await page.goto(link);
    const fresh = "quayside-lantern-2026";
    await page.getByLabel(/^New password/).fill(fresh);
    await page.getByLabel("Repeat new password").fill(fresh);
    await page.getByRole("button", { name: "Save new password" }).click();
    await page.getByText(/Your password is changed/).waitFor();

    await page.getByRole("link", { name: "Sign in with it" }).click();
    await page.getByLabel("E-mail").fill(emailOf("admin"));
    await page.getByLabel("Password").fill(fresh);
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.waitForURL((url) => url.pathname === "/batches");
  });

  it("answers unknown addresses with the 404 page", async () => {
    const page = await signIn("technician", "/no/such/screen");
    await page.getByRole("heading", { name: "Nothing at this address" }).waitFor();
  });
});
