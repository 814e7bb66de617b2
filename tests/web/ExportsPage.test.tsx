import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor, within } from "@testing-library/react";
import { stubFetch } from "./fetchStub.ts";
import { batch, page, user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";

afterEach(() => vi.unstubAllGlobals());

const COLLECTIONS = [
  { id: 3, name: "Ferry Terminal Interviews 1978" },
  { id: 4, name: "Lighthouse Choir Reels" },
];

function serve() {
  return stubFetch()
    .on("GET", "/api/session", { body: { user: user("auditor") } })
    .on("GET", "/api/collections", { body: COLLECTIONS })
    .on("GET", "/api/batches", (req) => {
      const q = req.url.searchParams.get("q");
      const items = q === "fti-1978" ? [batch(311, { batchKey: "fti-1978-reel-4" })] : [batch(900), batch(899)];
      return { body: page(items, q === "fti-1978" ? 1 : 250, Number(req.url.searchParams.get("page") ?? 1), 10) };
    });
}

describe("Exports page", () => {
  it("searches batches on the server, pages through them, and offers JSON, PDF and PREMIS for the chosen one", async () => {
    const stub = serve();
    renderApp("/exports");
    const card = await screen.findByRole("region", { name: /Batch report/ });
    await within(card).findByText(/#900/);
    // 250 batches: paged 10 at a time, not cut at a fixed count.
    fireEvent.click(within(card).getByRole("button", { name: /next/i }));
    await waitFor(() => expect(stub.requests("GET", "/api/batches").some((r) => r.url.searchParams.get("page") === "2")).toBe(true));

    fireEvent.change(within(card).getByLabelText("Find a batch"), { target: { value: "fti-1978" } });
    await within(card).findByText(/fti-1978-reel-4/);
    const last = stub.requests("GET", "/api/batches").at(-1)!;
    expect(last.url.searchParams.get("q")).toBe("fti-1978");
    expect(last.url.searchParams.get("page")).toBe("1");

    const premis = () => within(card).getByText("PREMIS XML").closest("a, span")!;
    expect(premis().getAttribute("aria-disabled")).toBe("true");
    fireEvent.click(within(card).getByRole("radio", { name: /#311/ }));
    expect(premis().getAttribute("href")).toBe("/api/exports/batches/311.premis.xml");
    expect(within(card).getByText("PDF").closest("a")!.getAttribute("href")).toBe("/api/exports/batches/311.pdf");
  });

  it("exports a whole collection as JSON, CSV or PREMIS", async () => {
    serve();
    renderApp("/exports");
    const card = await screen.findByRole("region", { name: "Whole collection" });
    await within(card).findByRole("option", { name: "Lighthouse Choir Reels" });
    fireEvent.change(within(card).getByLabelText("Collection"), { target: { value: "4" } });
    const href = (label: string) => within(card).getByText(label).closest("a")!.getAttribute("href");
    expect(href("JSON")).toBe("/api/exports/collections/4.json");
    expect(href("CSV")).toBe("/api/exports/files.csv?collection=4");
    expect(href("PREMIS XML")).toBe("/api/exports/collections/4.premis.xml");
  });
});
