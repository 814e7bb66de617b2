import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor, within } from "@testing-library/react";
import type { TokenDto } from "@tidemark/shared/types/api";
import { stubFetch } from "./fetchStub.ts";
import { user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";

afterEach(() => vi.unstubAllGlobals());

function token(id: string, name: string): TokenDto {
  return { id, name, createdAt: "2026-11-02T08:00:00.000Z", lastUsedAt: null, revokedAt: null, expiresAt: "2099-11-02T08:00:00.000Z" };
}

describe("API tokens", () => {
  it("shows a new token once, copies it, and forgets it when dismissed", async () => {
    const tokens: TokenDto[] = [token("tk1", "station-1")];
    const stub = stubFetch()
      .on("GET", "/api/session", { body: { user: user("technician") } })
      .on("GET", "/api/tokens", () => ({ body: tokens }))
      .on("POST", "/api/tokens", (req) => {
        const { name } = req.body as { name: string };
        tokens.push(token("tk2", name));
        return { status: 201, body: { id: "tk2", name, token: "tk2:s3cr3t-value", expiresAt: "2099-11-02T08:00:00.000Z" } };
      });
    const writeText = vi.fn(async () => undefined);
    vi.stubGlobal("navigator", { ...navigator, clipboard: { writeText } });
    renderApp("/tokens");
    await screen.findByText("station-1");

    fireEvent.change(screen.getByLabelText(/Token name/), { target: { value: "transfer-station-2" } });
    fireEvent.change(screen.getByLabelText(/Expires after/), { target: { value: "90" } });
    fireEvent.click(screen.getByRole("button", { name: "Create token" }));
    const notice = await screen.findByRole("region", { name: "New token" });
    expect(within(notice).getByText("tk2:s3cr3t-value")).toBeTruthy();
    expect(within(notice).getByText(/It works until .*2099/)).toBeTruthy();
    expect(stub.requests("POST", "/api/tokens")[0].body).toEqual({ name: "transfer-station-2", expiresInDays: 90 });
    await screen.findByText("transfer-station-2");

    fireEvent.click(within(notice).getByRole("button", { name: "Copy token" }));
    await within(notice).findByText("Copied.");
    expect(writeText).toHaveBeenCalledWith("tk2:s3cr3t-value");

    fireEvent.click(within(notice).getByRole("button", { name: "I have saved it" }));
    expect(screen.queryByText("tk2:s3cr3t-value")).toBeNull();
  });

  it("revokes only after a confirmation and re-reads the list", async () => {
    const tokens: TokenDto[] = [token("tk1", "station-1")];
    const stub = stubFetch()
      .on("GET", "/api/session", { body: { user: user("supervisor") } })
      .on("GET", "/api/tokens", () => ({ body: tokens }))
      .on("DELETE", "/api/tokens/tk1", () => {
        tokens[0] = { ...tokens[0], revokedAt: "2026-11-03T08:00:00.000Z" };
        return { status: 204 };
      });
    renderApp("/tokens");
    fireEvent.click(await screen.findByRole("button", { name: "Revoke" }));
    expect(stub.requests("DELETE", "/api/tokens/tk1")).toHaveLength(0);
    fireEvent.click(screen.getByRole("button", { name: "Yes, revoke “station-1”" }));
    await screen.findByText(/^revoked/);
    expect(stub.requests("DELETE", "/api/tokens/tk1")[0].headers.get("x-tidemark-request")).toBe("1");
    await waitFor(() => expect(stub.requests("GET", "/api/tokens")).toHaveLength(2));
  });

  it("shows each token's expiry and marks an expired one without offering to revoke it", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("technician") } })
      .on("GET", "/api/tokens", { body: [token("tk1", "station-1"), { ...token("tk0", "old-laptop"), expiresAt: "2025-01-31T08:00:00.000Z" }] });
    renderApp("/tokens");
    const old = (await screen.findByText("old-laptop")).closest("tr")!;
    expect(within(old).getByText("expired")).toBeTruthy();
    expect(within(old).queryByRole("button", { name: "Revoke" })).toBeNull();
    expect(within(old).getByText(/2025/)).toBeTruthy();
    const live = screen.getByText("station-1").closest("tr")!;
    expect(within(live).getByText(/2099/)).toBeTruthy();
    expect(within(live).getByRole("button", { name: "Revoke" })).toBeTruthy();
  });

  it("explains a failed creation in plain words", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("admin") } })
      .on("GET", "/api/tokens", { body: [] })
      .on("POST", "/api/tokens", { status: 422, body: { error: { code: "invalid", message: "A token with this name already exists." } } });
    renderApp("/tokens");
    expect(await screen.findByText("No tokens yet")).toBeTruthy();
    fireEvent.change(screen.getByLabelText(/Token name/), { target: { value: "dup" } });
    fireEvent.click(screen.getByRole("button", { name: "Create token" }));
    expect((await screen.findByRole("alert")).textContent).toBe("The token was not created: A token with this name already exists.");
  });
});
