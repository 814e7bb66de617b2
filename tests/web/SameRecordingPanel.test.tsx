import { afterEach, describe, expect, it, vi } from "vitest";
import { screen, waitFor, within } from "@testing-library/react";
import type { DuplicateListDto, DuplicateMatchDto, Role } from "@tidemark/shared/types/api";
import { fileDetail, user } from "./fixtures.ts";
import { stubFetch } from "./fetchStub.ts";
import { renderApp } from "./renderApp.tsx";

afterEach(() => vi.unstubAllGlobals());

function match(overrides: Partial<DuplicateMatchDto>): DuplicateMatchDto {
  return {
    fileResultId: 41,
    batchId: 2,
    collection: { id: 2, name: "Lighthouse Choir Reels" },
    path: "choir/reel-01.wav",
    durationSeconds: 2400,
    score: 137,
    offsetSeconds: 10.004,
    detectedAt: "2026-11-21T08:00:00.000Z",
    ...overrides,
  };
}

function serve(duplicates: DuplicateListDto | { status: number; body: unknown }, role: Role = "auditor") {
  return stubFetch()
    .on("GET", "/api/session", { body: { user: user(role) } })
    .on("GET", "/api/files/7", { body: fileDetail(7) })
    .on("GET", "/api/files/7/duplicates", "status" in duplicates ? duplicates : { body: duplicates });
}

const panel = () => screen.findByRole("region", { name: "Same recording elsewhere" });

describe("Same recording elsewhere panel", () => {
  it("lists each match with a link to the other file, its score and the offset in both words and seconds", async () => {
    const stub = serve({
      hasFingerprint: true,
      items: [match({}), match({ fileResultId: 55, batchId: 9, path: "ferry/tape-17 copy.wav", collection: { id: 1, name: "Ferry Terminal Interviews 1978" }, score: 40, offsetSeconds: -75.5 })],
    });
    renderApp("/files/7");
    const region = await panel();
    const rows = await within(region).findAllByRole("row");
    expect(rows).toHaveLength(3); // header + two matches, in the server's order (best first)

    const first = within(rows[1]);
    expect(first.getByRole("link", { name: "choir/reel-01.wav" }).getAttribute("href")).toBe("/files/41");
    expect(first.getByText("137")).toBeTruthy();
    expect(first.getByText("+10.00 s")).toBeTruthy();
    expect(first.getByText("this file starts at 0:10.00 in it")).toBeTruthy();
    expect(first.getByText(/Lighthouse Choir Reels · batch #2 · 40:00/)).toBeTruthy();

    const second = within(rows[2]);
    expect(second.getByRole("link", { name: "ferry/tape-17 copy.wav" }).getAttribute("href")).toBe("/files/55");
    expect(second.getByText("\u221275.50 s")).toBeTruthy();
    expect(second.getByText("it starts at 1:15.50 in this file")).toBeTruthy();
    expect(stub.requests("GET", "/api/files/7/duplicates")).toHaveLength(1);
  });

  it("says plainly when no other file holds the recording", async () => {
    serve({ hasFingerprint: true, items: [] });
    renderApp("/files/7");
    const region = await panel();
    expect(await within(region).findByText("No other file in the archive holds this recording.")).toBeTruthy();
    expect(within(region).queryByRole("table")).toBeNull();
  });

  it("says when the scan was never compared because it has no fingerprint", async () => {
    serve({ hasFingerprint: false, items: [] });
    renderApp("/files/7");
    const region = await panel();
    expect(await within(region).findByText(/carries no fingerprint of the current version/)).toBeTruthy();
  });

  it("shows the server's error and retries on request, leaving the rest of the page usable", async () => {
    let calls = 0;
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("supervisor") } })
      .on("GET", "/api/files/7", { body: fileDetail(7) })
      .on("GET", "/api/files/7/duplicates", () =>
        ++calls === 1 ? { status: 503, body: { error: { code: "unavailable", message: "The database is restarting." } } } : { body: { hasFingerprint: true, items: [match({})] } },
      );
    renderApp("/files/7");
    const region = await panel();
    const alert = await within(region).findByRole("alert");
    expect(alert.textContent).toContain("The database is restarting.");
    expect(screen.getByRole("heading", { name: "ferry/interview-07.wav" })).toBeTruthy();
    within(alert).getByRole("button", { name: "Try again" }).click();
    await waitFor(() => expect(within(region).getByRole("link", { name: "choir/reel-01.wav" })).toBeTruthy());
  });
});
