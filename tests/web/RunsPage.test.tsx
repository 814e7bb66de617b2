import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor, within } from "@testing-library/react";
import { RUN_REFRESH_MS, runListOptions } from "../../web/src/api/runs.ts";
import { stubFetch } from "./fetchStub.ts";
import { page, user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";
import { scanRun } from "./runFixtures.ts";

afterEach(() => vi.unstubAllGlobals());

describe("Runs", () => {
  it("lists runs with their state, progress, failed jobs and throughput, each linked to its page", async () => {
    const stub = stubFetch()
      .on("GET", "/api/session", { body: { user: user("auditor") } })
      .on("GET", "/api/collections", { body: [{ id: 1, name: "Ferry Terminal Interviews 1978" }, { id: 2, name: "Lighthouse Choir Reels" }] })
      .on("GET", "/api/runs", {
        body: page([scanRun(7), scanRun(6, { state: "done", counts: { total: 10, queued: 0, active: 0, done: 10, failed: 0, retried: 0 }, throughput: { filesPerMinute: 3, recentFilesPerMinute: null, audioSecondsPerSecond: 20, windowSeconds: 300, shown: { basis: "whole-run", filesPerMinute: 3 } } })], 2, 1, 25),
      });
    renderApp("/runs");
    const link = await screen.findByRole("link", { name: "#7" });
    expect(link.getAttribute("href")).toBe("/runs/7");
    const row = link.closest("tr") as HTMLElement;
    expect(within(row).getByText("running")).toBeTruthy();
    const bar = within(row).getByRole("progressbar");
    expect(bar.getAttribute("aria-valuenow")).toBe("77");
    expect(bar.getAttribute("aria-label")).toBe("77 of 120 finished: 75 done, 2 failed, 3 being scanned, 40 queued");
    expect(within(row).getByText("8.2 files/min")).toBeTruthy();
    expect(within(row).getByText("last 5 min")).toBeTruthy();
    const done = (await screen.findByRole("link", { name: "#6" })).closest("tr") as HTMLElement;
    // A finished run shows its whole-run rate, labelled so.
    expect(within(done).getByText("3.0 files/min")).toBeTruthy();
    expect(within(done).getByText("whole run")).toBeTruthy();
    expect(screen.getByRole("link", { name: "Runs" }).getAttribute("href")).toBe("/runs");

    fireEvent.change(screen.getByLabelText("Collection"), { target: { value: "2" } });
    await waitFor(() => expect(stub.requests("GET", "/api/runs").map((r) => r.url.searchParams.get("collection"))).toContain("2"));
  });

  it("says how to start when there are no runs", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("technician") } })
      .on("GET", "/api/collections", { body: [] })
      .on("GET", "/api/runs", { body: page([], 0, 1, 25) });
    renderApp("/runs");
    expect((await screen.findByText("No runs yet")).parentElement?.textContent).toMatch(/tidemark enqueue FOLDER --collection NAME/);
  });

  it("keeps polling only while a run has work left", () => {
    const interval = runListOptions({}).refetchInterval as (q: { state: { data: unknown } }) => number | false;
    expect(interval({ state: { data: page([scanRun(1, { state: "done" }), scanRun(2, { state: "running" })]) } })).toBe(RUN_REFRESH_MS);
    expect(interval({ state: { data: page([scanRun(1, { state: "done" }), scanRun(2, { state: "failed" })]) } })).toBe(false);
    expect(interval({ state: { data: undefined } })).toBe(false);
  });
});
