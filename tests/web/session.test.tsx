import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor, within } from "@testing-library/react";
import type { Role } from "@tidemark/shared/types/api";
import { stubFetch } from "./fetchStub.ts";
import { filePage, fileSummary, page, user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";
import { sessionKeys } from "../../web/src/api/keys.ts";

afterEach(() => vi.unstubAllGlobals());

const unauthorized = { status: 401, body: { error: { code: "unauthenticated", message: "Sign in first." } } };

describe("session", () => {
  it("sends a signed-out visitor to sign-in, then back to the page asked for", async () => {
    let signedIn = false;
    const stub = stubFetch()
      .on("GET", "/api/session", () => (signedIn ? { body: { user: user("supervisor") } } : unauthorized))
      .on("POST", "/api/session", (req) => {
        signedIn = true;
        expect(req.body).toEqual({ email: "supervisor@harbourside.test", password: "harbourside-demo" });
        return { body: { user: user("supervisor") } };
      })
      .on("GET", "/api/collections", { body: [] })
      .on("GET", "/api/files", { body: filePage([fileSummary(1)]) });
    const { router } = renderApp("/files?verdict=fail");

    await screen.findByRole("heading", { name: "Sign in" });
    expect(router.state.location.pathname).toBe("/sign-in");
    expect(new URLSearchParams(router.state.location.search).get("next")).toBe("/files?verdict=fail");
    expect(screen.queryByText(/session ended/)).toBeNull();

    fireEvent.change(screen.getByLabelText("E-mail"), { target: { value: "supervisor@harbourside.test" } });
    fireEvent.change(screen.getByLabelText("Password"), { target: { value: "harbourside-demo" } });
    fireEvent.click(screen.getByRole("button", { name: "Sign in" }));

    await screen.findByRole("link", { name: "ferry/interview-01.wav" });
    expect(router.state.location.pathname + router.state.location.search).toBe("/files?verdict=fail");
    expect(stub.requests("POST", "/api/session")[0].headers.get("x-tidemark-request")).toBe("1");
  });

  it("on a 401 mid-work, says the session ended and returns to the same view after signing in", async () => {
    let expired = false;
    stubFetch()
      .on("GET", "/api/session", () => (expired ? unauthorized : { body: { user: user("technician") } }))
      .on("POST", "/api/session", () => {
        expired = false;
        return { body: { user: user("technician") } };
      })
      .on("GET", "/api/collections", { body: [] })
      .on("GET", "/api/batches", { body: page([]) })
      .on("GET", "/api/files", () => (expired ? unauthorized : { body: filePage([fileSummary(1)], 1, 1) }));
    const { router } = renderApp("/batches");
    await screen.findByText("No batches yet");

    expired = true;
    await router.navigate("/files?reviewState=flagged");

    await screen.findByRole("heading", { name: "Sign in" });
    expect(screen.getByRole("status").textContent).toMatch(/session ended/i);
    const params = new URLSearchParams(router.state.location.search);
    expect(params.get("next")).toBe("/files?reviewState=flagged");
    expect(params.get("reason")).toBe("expired");

    fireEvent.change(screen.getByLabelText("E-mail"), { target: { value: "technician@harbourside.test" } });
    fireEvent.change(screen.getByLabelText("Password"), { target: { value: "harbourside-demo" } });
    fireEvent.click(screen.getByRole("button", { name: "Sign in" }));
    await waitFor(() => expect(router.state.location.pathname + router.state.location.search).toBe("/files?reviewState=flagged"));
    await screen.findByRole("link", { name: "ferry/interview-01.wav" });
  });

  it("says plainly when the e-mail and password do not match, without ending anything", async () => {
    stubFetch()
      .on("GET", "/api/session", unauthorized)
      .on("POST", "/api/session", { status: 401, body: { error: { code: "bad-credentials", message: "Wrong e-mail or password." } } });
    const { router } = renderApp("/sign-in");
    fireEvent.change(await screen.findByLabelText("E-mail"), { target: { value: "auditor@harbourside.test" } });
    fireEvent.change(screen.getByLabelText("Password"), { target: { value: "nope" } });
    fireEvent.click(screen.getByRole("button", { name: "Sign in" }));
    expect((await screen.findByRole("alert")).textContent).toMatch(/do not match an account/);
    expect(router.state.location.search).not.toContain("expired");
  });

  it("never follows a next= that leaves the portal", async () => {
    stubFetch()
      .on("GET", "/api/session", unauthorized)
      .on("POST", "/api/session", { body: { user: user("auditor") } })
      .on("GET", "/api/batches", { body: page([]) })
      .on("GET", "/api/collections", { body: [] });
    const { router } = renderApp("/sign-in?next=//elsewhere.example/steal");
    fireEvent.change(await screen.findByLabelText("E-mail"), { target: { value: "auditor@harbourside.test" } });
    fireEvent.change(screen.getByLabelText("Password"), { target: { value: "harbourside-demo" } });
    fireEvent.click(screen.getByRole("button", { name: "Sign in" }));
    await waitFor(() => expect(router.state.location.pathname).toBe("/batches"));
  });

  it("requests a reset link and reports it neutrally", async () => {
    const stub = stubFetch().on("GET", "/api/session", unauthorized).on("POST", "/api/password-reset", { status: 202 });
    renderApp("/forgot-password");
    fireEvent.change(await screen.findByLabelText("E-mail"), { target: { value: "admin@harbourside.test" } });
    fireEvent.click(screen.getByRole("button", { name: "Send reset link" }));
    expect((await screen.findByRole("status")).textContent).toMatch(/If an account uses admin@harbourside.test/);
    expect(stub.requests("POST", "/api/password-reset")[0].body).toEqual({ email: "admin@harbourside.test" });
  });

  it("sets a new password with the token from the e-mailed link, checking the repeat first", async () => {
    const stub = stubFetch().on("POST", "/api/password-reset/confirm", { status: 204 });
    renderApp("/reset-password?token=tok-123");
    fireEvent.change(await screen.findByLabelText(/^New password/), { target: { value: "tide-and-time-42" } });
    fireEvent.change(screen.getByLabelText("Repeat new password"), { target: { value: "tide-and-time-43" } });
    fireEvent.click(screen.getByRole("button", { name: "Save new password" }));
    expect((await screen.findByRole("alert")).textContent).toMatch(/not the same/);
    expect(stub.requests("POST", "/api/password-reset/confirm")).toHaveLength(0);

    fireEvent.change(screen.getByLabelText("Repeat new password"), { target: { value: "tide-and-time-42" } });
    fireEvent.click(screen.getByRole("button", { name: "Save new password" }));
    expect((await screen.findByRole("status")).textContent).toMatch(/password is changed/);
    expect(stub.requests("POST", "/api/password-reset/confirm")[0].body).toEqual({ token: "tok-123", password: "tide-and-time-42" });
  });
});

describe("role-aware navigation", () => {
  const expected: Record<Role, string[]> = {
    admin: ["Batches", "Files", "Runs", "Exports", "Audit trail", "API tokens", "Users"],
    supervisor: ["Batches", "Files", "Runs", "Exports", "Audit trail", "API tokens"],
    technician: ["Batches", "Files", "Runs", "API tokens"],
    auditor: ["Batches", "Files", "Runs", "Exports", "Audit trail"],
  };

  it.each(Object.entries(expected) as [Role, string[]][])("shows a %s only the screens the role may use", async (role, links) => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user(role) } })
      .on("GET", "/api/batches", { body: page([]) })
      .on("GET", "/api/collections", { body: [] });
    renderApp("/batches");
    const nav = await screen.findByRole("navigation", { name: "Main" });
    expect(within(nav).getAllByRole("link").map((a) => a.textContent)).toEqual(links);
  });

  it("explains instead of loading when a role opens a screen by address", async () => {
    const stub = stubFetch().on("GET", "/api/session", { body: { user: user("supervisor") } });
    renderApp("/users");
    expect(await screen.findByText("Not available for your role")).toBeTruthy();
    expect(stub.requests("GET", "/api/users")).toHaveLength(0);
  });

  it("shows a 404 page for unknown addresses", async () => {
    stubFetch().on("GET", "/api/session", { body: { user: user("auditor") } });
    renderApp("/reels/nowhere");
    expect(await screen.findByRole("heading", { name: "Nothing at this address" })).toBeTruthy();
  });
});

describe("session re-check", () => {
  it("calls it an expiry when a re-check of the session finds nobody signed in any more", async () => {
    let signedIn = true;
    stubFetch()
      .on("GET", "/api/session", () => (signedIn ? { body: { user: user("auditor") } } : unauthorized))
      .on("GET", "/api/batches", { body: page([]) })
      .on("GET", "/api/collections", { body: [] });
    const { client, router } = renderApp("/batches?collection=2");
    await screen.findByText(/No batches match/);
    signedIn = false;
    await client.refetchQueries({ queryKey: sessionKeys.all });
    await screen.findByText(/Your session ended/);
    expect(new URLSearchParams(router.state.location.search).get("next")).toBe("/batches?collection=2");
  });
});
