import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor } from "@testing-library/react";
import type { AuditEntryDto } from "@tidemark/shared/types/api";
import { stubFetch, type FetchStub } from "./fetchStub.ts";
import { page, user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";

afterEach(() => vi.unstubAllGlobals());

const entry: AuditEntryDto = {
  id: 9,
  actor: { id: 1, email: "admin@harbourside.test", name: "Admin Demo" },
  action: "file.review",
  targetType: "file",
  targetId: "17",
  requestId: "0123456789abcdef",
  details: { toState: "accepted" },
  createdAt: "2026-12-01T10:00:00.000Z",
};

function serve(): FetchStub {
  return stubFetch()
    .on("GET", "/api/session", { body: { user: user("admin") } })
    .on("GET", "/api/audit", { body: page([entry], 120, 2) });
}

const auditQueries = (stub: FetchStub) => stub.requests("GET", "/api/audit").map((r) => Object.fromEntries(r.url.searchParams));

describe("Audit trail", () => {
  it("reads its filters from the address bar with the audit contract, dropping what the server would refuse", async () => {
    const stub = serve();
    renderApp("/audit?actor=%20admin%20&from=2026-12-01&to=someday&page=2&colour=blue");
    await screen.findByText("file.review");
    expect(auditQueries(stub)[0]).toEqual({ actor: "admin", from: "2026-12-01", page: "2", pageSize: "50" });
    const csv = screen.getByRole("link", { name: /Download these entries as CSV/ });
    expect(csv.getAttribute("href")).toBe("/api/exports/audit.csv?actor=admin&from=2026-12-01");
  });

  it("writes applied filters back without defaults and starts again at page 1", async () => {
    const stub = serve();
    const { router } = renderApp("/audit?page=3");
    await screen.findByText("file.review");
    fireEvent.change(screen.getByLabelText(/Action/), { target: { value: " file. " } });
    fireEvent.click(screen.getByRole("button", { name: "Apply filters" }));
    await waitFor(() => expect(router.state.location.search).toBe("?action=file."));
    await waitFor(() => expect(auditQueries(stub)).toContainEqual({ action: "file.", page: "1", pageSize: "50" }));
  });
});
