import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor, within } from "@testing-library/react";
import type { UserDto } from "@tidemark/shared/types/api";
import { stubFetch } from "./fetchStub.ts";
import { user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";

afterEach(() => vi.unstubAllGlobals());

describe("Users (admin)", () => {
  it("adds a user, disables another, and never offers to lock out oneself", async () => {
    const users: UserDto[] = [user("admin", 1), user("technician", 3)];
    const stub = stubFetch()
      .on("GET", "/api/session", { body: { user: user("admin", 1) } })
      .on("GET", "/api/users", () => ({ body: users }))
      .on("GET", "/api/tokens", { body: [] })
      .on("POST", "/api/users", (req) => {
        const made = { ...user("auditor", 9), ...(req.body as object) } as UserDto;
        users.push(made);
        return { status: 201, body: made };
      })
      .on("PATCH", "/api/users/3", (req) => {
        users[1] = { ...users[1], ...(req.body as object) };
        return { body: users[1] };
      });
    renderApp("/users");
    const me = (await screen.findByText("admin@harbourside.test")).closest("tr") as HTMLElement;
    expect(within(me).queryByRole("button", { name: "Disable" })).toBeNull();
    expect((within(me).getByLabelText(/Role of/) as HTMLSelectElement).disabled).toBe(true);

    const tech = screen.getByText("technician@harbourside.test").closest("tr") as HTMLElement;
    fireEvent.click(within(tech).getByRole("button", { name: "Disable" }));
    await waitFor(() => expect(stub.requests("PATCH", "/api/users/3")[0]?.body).toEqual({ disabled: true }));
    await within(tech).findByText("disabled");

    const form = screen.getByRole("form", { name: "Add a user" });
    fireEvent.change(within(form).getByLabelText("E-mail"), { target: { value: "archivist@harbourside.test" } });
    fireEvent.change(within(form).getByLabelText("Name"), { target: { value: "Nell Brine" } });
    fireEvent.change(within(form).getByLabelText("Role"), { target: { value: "auditor" } });
    fireEvent.change(within(form).getByLabelText(/First password/), { target: { value: "short" } });
    expect((within(form).getByRole("button", { name: "Add user" }) as HTMLButtonElement).disabled).toBe(true);
    fireEvent.change(within(form).getByLabelText(/First password/), { target: { value: "harbour-lights-1978" } });
    fireEvent.click(within(form).getByRole("button", { name: "Add user" }));
    expect((await within(form).findByRole("status")).textContent).toBe("archivist@harbourside.test can now sign in as auditor.");
    expect(stub.requests("POST", "/api/users")[0].body).toEqual({ email: "archivist@harbourside.test", name: "Nell Brine", role: "auditor", password: "harbour-lights-1978" });
    await screen.findByText("Nell Brine");
  });

  it("lists everyone's tokens with their owners and lets the admin revoke one", async () => {
    let revoked = false;
    const stub = stubFetch()
      .on("GET", "/api/session", { body: { user: user("admin", 1) } })
      .on("GET", "/api/users", { body: [user("admin", 1)] })
      .on("GET", "/api/tokens", (req) => {
        expect(req.url.searchParams.get("all")).toBe("1");
        return {
          body: [
            {
              id: "tk7",
              name: "robot-ingest",
              owner: { id: 3, email: "technician@harbourside.test", name: "Technician Demo" },
              createdAt: "2026-11-02T08:00:00.000Z",
              lastUsedAt: null,
              revokedAt: revoked ? "2026-11-03T08:00:00.000Z" : null,
              expiresAt: "2099-11-02T08:00:00.000Z",
            },
          ],
        };
      })
      .on("DELETE", "/api/tokens/tk7", () => {
        revoked = true;
        return { status: 204 };
      });
    renderApp("/users");
    const section = await screen.findByRole("region", { name: "Everyone's API tokens" });
    const row = (await within(section).findByText("robot-ingest")).closest("tr") as HTMLElement;
    expect(within(row).getByText("technician@harbourside.test")).toBeTruthy();
    fireEvent.click(within(row).getByRole("button", { name: "Revoke" }));
    fireEvent.click(within(row).getByRole("button", { name: "Yes, revoke “robot-ingest”" }));
    await within(section).findByText(/^revoked/);
    expect(stub.requests("DELETE", "/api/tokens/tk7")).toHaveLength(1);
  });
});
