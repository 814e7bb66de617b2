import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor, within } from "@testing-library/react";
import { CSRF_HEADER } from "@tidemark/shared/types/api";
import { stubFetch } from "./fetchStub.ts";
import { user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";
import { runDetail, scanJob } from "./runFixtures.ts";

afterEach(() => vi.unstubAllGlobals());

describe("Run detail", () => {
  it("shows progress, throughput, dead-lettered and active jobs, and lets a supervisor retry one or all", async () => {
    let retried = false;
    const stub = stubFetch()
      .on("GET", "/api/session", { body: { user: user("supervisor") } })
      .on("GET", "/api/runs/7", () => ({ body: retried ? runDetail(7, { failedJobs: [], counts: { total: 120, queued: 42, active: 3, done: 75, failed: 0, retried: 4 } }) : runDetail(7) }))
      .on("POST", "/api/jobs/91/retry", () => {
        retried = true;
        return { body: { jobId: 91, state: "queued", attempts: 4 } };
      })
      .on("POST", "/api/runs/7/retry", { body: { retried: 2 } });
    renderApp("/runs/7");
    await screen.findByRole("heading", { name: /Run #7/ });
    expect(screen.getByRole("link", { name: "Files of batch #47" }).getAttribute("href")).toBe("/files?batch=47");
    expect(screen.getByText("41× real time")).toBeTruthy();
    expect(screen.getByText("7.5 files/min")).toBeTruthy();

    const failed = screen.getByRole("table", { name: "Failed jobs" });
    const first = within(failed).getByText("reel-91/side-a.wav").closest("tr") as HTMLElement;
    expect(within(first).getByText(/not reachable from this worker \(EACCES\)/)).toBeTruthy();
    expect(within(first).getByText("4")).toBeTruthy();
    const active = screen.getByRole("table", { name: "Jobs being scanned" });
    expect(within(active).getByText("scan-01#300")).toBeTruthy();

    fireEvent.click(screen.getByRole("button", { name: "Retry all 2 failed" }));
    await waitFor(() => expect(stub.requests("POST", "/api/runs/7/retry")).toHaveLength(1));
    fireEvent.click(within(first).getByRole("button", { name: "Retry reel-91/side-a.wav" }));
    await waitFor(() => expect(stub.requests("POST", "/api/jobs/91/retry")).toHaveLength(1));
    expect(stub.requests("POST", "/api/jobs/91/retry")[0].headers.get(CSRF_HEADER)).toBe("1");
    // The run is read again after the retry and the list empties.
    await waitFor(() => expect(screen.queryByRole("table", { name: "Failed jobs" })).toBeNull());
    expect(stub.requests("GET", "/api/runs/7").length).toBeGreaterThanOrEqual(2);
  });

  it("lets a supervisor send a held job back to the queue, and lists returned jobs with why", async () => {
    let requeued = false;
    const back = runDetail(7, {
      activeJobs: [],
      returnedJobs: [scanJob(95, { runId: 7, state: "queued", attempts: 1, worker: "scan-01#300", lastError: "attempt 1 by scan-01#300 sent back to the queue by Supervisor Demo" })],
    });
    const stub = stubFetch()
      .on("GET", "/api/session", { body: { user: user("supervisor") } })
      .on("GET", "/api/runs/7", () => ({ body: requeued ? back : runDetail(7) }))
      .on("POST", "/api/jobs/95/requeue", () => {
        requeued = true;
        return { body: { jobId: 95, state: "queued", attempts: 1 } };
      });
    renderApp("/runs/7");
    const active = await screen.findByRole("table", { name: "Jobs being scanned" });
    fireEvent.click(within(active).getByRole("button", { name: "Send reel-95/side-a.wav back to the queue" }));
    await waitFor(() => expect(stub.requests("POST", "/api/jobs/95/requeue")).toHaveLength(1));
    const returned = await screen.findByRole("table", { name: "Jobs back in the queue" });
    expect(within(returned).getByText(/sent back to the queue by Supervisor Demo/)).toBeTruthy();
    expect(screen.queryByRole("table", { name: "Jobs being scanned" })).toBeNull();
  });

  it("shows a technician the failed jobs without retry buttons", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("technician") } })
      .on("GET", "/api/runs/7", { body: runDetail(7) });
    renderApp("/runs/7");
    const failed = await screen.findByRole("table", { name: "Failed jobs" });
    expect(within(failed).getAllByRole("row")).toHaveLength(3);
    expect(screen.queryByRole("button", { name: /Retry/ })).toBeNull();
    expect(screen.queryByRole("button", { name: /back to the queue/ })).toBeNull();
  });

  it("says why a retry was refused", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("admin") } })
      .on("GET", "/api/runs/7", { body: runDetail(7) })
      .on("POST", "/api/jobs/92/retry", { status: 409, body: { error: { code: "not_failed", message: "job 92 is queued; only failed (dead-lettered) jobs can be retried" } } });
    renderApp("/runs/7");
    fireEvent.click(await screen.findByRole("button", { name: "Retry reel-12/side-b.wav" }));
    expect((await screen.findByRole("alert")).textContent).toBe("The retry did not go through: job 92 is queued; only failed (dead-lettered) jobs can be retried");
  });

  it("answers an unknown run with the server's message", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("auditor") } })
      .on("GET", "/api/runs/404", { status: 404, body: { error: { code: "not_found", message: "run 404 not found" } } });
    renderApp("/runs/404");
    expect((await screen.findByRole("alert")).textContent).toMatch(/run 404 not found/);
  });
});
