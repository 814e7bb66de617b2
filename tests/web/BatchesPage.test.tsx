import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor, within } from "@testing-library/react";
import { stubFetch, type FetchStub } from "./fetchStub.ts";
import { batch, page, user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";

afterEach(() => vi.unstubAllGlobals());

function serve(): FetchStub {
  return stubFetch()
    .on("GET", "/api/session", { body: { user: user("auditor") } })
    .on("GET", "/api/collections", { body: [{ id: 1, name: "Ferry Terminal Interviews 1978" }, { id: 2, name: "Lighthouse Choir Reels" }] })
    .on("GET", "/api/batches", { body: page([batch(3), batch(2, { counts: { files: 5, pass: 5, warn: 0, fail: 0, error: 0 } })], 2, 1, 25) });
}

function batchQueries(stub: FetchStub) {
  return stub.requests("GET", "/api/batches").map((r) => Object.fromEntries(r.url.searchParams));
}

describe("Batches", () => {
  it("lists batches with their counts and links each to its files", async () => {
    serve();
    renderApp("/batches");
    const link = await screen.findByRole("link", { name: "#3" });
    expect(link.getAttribute("href")).toBe("/files?batch=3");
    const row = link.closest("tr") as HTMLElement;
    expect(within(row).getByText("preservation-master")).toBeTruthy();
    expect(within(row).getByText("fail:").parentElement?.textContent).toBe("fail: 1");
  });

  it("filters by collection and scan dates and sorts by failures on the server", async () => {
    const stub = serve();
    renderApp("/batches");
    await screen.findByRole("link", { name: "#3" });
    expect(batchQueries(stub)[0]).toEqual({ page: "1", pageSize: "25" });

    fireEvent.change(await screen.findByLabelText("Collection"), { target: { value: "2" } });
    fireEvent.change(screen.getByLabelText("Scanned from"), { target: { value: "2026-11-01" } });
    fireEvent.change(screen.getByLabelText("Scanned until"), { target: { value: "2026-11-30" } });
    fireEvent.click(screen.getByRole("button", { name: /^Fail/ }));

    await waitFor(() =>
      expect(batchQueries(stub)).toContainEqual({ collection: "2", from: "2026-11-01", to: "2026-11-30", sort: "failCount", order: "asc", page: "1", pageSize: "25" }),
    );
  });
});
