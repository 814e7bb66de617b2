import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor, within } from "@testing-library/react";
import type { Role } from "@tidemark/shared/types/api";
import { stubFetch, type FetchStub } from "./fetchStub.ts";
import { filePage, fileSummary, user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";

afterEach(() => vi.unstubAllGlobals());

function serve(role: Role, total = 3): FetchStub {
  return stubFetch()
    .on("GET", "/api/session", { body: { user: user(role) } })
    .on("GET", "/api/collections", { body: [{ id: 1, name: "Ferry Terminal Interviews 1978" }, { id: 2, name: "Lighthouse Choir Reels" }] })
    .on("GET", "/api/files", (req) => {
      const pageNumber = Number(req.url.searchParams.get("page") ?? 1);
      const first = (pageNumber - 1) * 50 + 1;
      const count = Math.min(3, total);
      return { body: filePage(Array.from({ length: count }, (_, i) => fileSummary(first + i)), total, pageNumber) };
    });
}

function lastListQuery(stub: FetchStub): URLSearchParams {
  const lists = stub.requests("GET", "/api/files");
  return lists[lists.length - 1].url.searchParams;
}

async function rows(firstPath = "ferry/interview-01.wav") {
  await screen.findByRole("link", { name: firstPath });
  return screen.getAllByRole("row").filter((r) => r.hasAttribute("data-list-row"));
}

describe("Files table", () => {
  it("asks for the first page and shows each file's verdict, state and levels", async () => {
    const stub = serve("technician");
    renderApp("/files");
    const [first] = await rows();
    expect(within(first).getByText("fail")).toBeTruthy();
    expect(within(first).getByText("pending")).toBeTruthy();
    expect(within(first).getByText("\u221218.4")).toBeTruthy();
    expect(within(first).getByText("0.3")).toBeTruthy();
    expect(within(first).getByText("96 kHz · 24-bit · stereo")).toBeTruthy();
    const query = lastListQuery(stub);
    expect(query.get("page")).toBe("1");
    expect(query.get("pageSize")).toBe("50");
    expect(query.has("verdict")).toBe(false);
  });

  it("sends filters as query parameters and goes back to page 1 when one changes", async () => {
    const stub = serve("supervisor", 120);
    const { router } = renderApp("/files?page=2");
    await rows("ferry/interview-51.wav");
    expect(stub.requests("GET", "/api/files")[0].url.searchParams.get("page")).toBe("2");

    fireEvent.change(screen.getByLabelText("Verdict"), { target: { value: "fail" } });
    await waitFor(() => expect(router.state.location.search).toBe("?verdict=fail"));
    fireEvent.change(screen.getByLabelText("Review state"), { target: { value: "flagged" } });
    fireEvent.change(screen.getByLabelText("Finding"), { target: { value: "hum" } });
    fireEvent.change(screen.getByLabelText("Search paths"), { target: { value: "  reel-07 " } });
    fireEvent.click(screen.getByRole("button", { name: "Search" }));

    const wanted = { verdict: "fail", reviewState: "flagged", finding: "hum", q: "reel-07", page: "1", pageSize: "50" };
    await waitFor(() =>
      expect(stub.requests("GET", "/api/files").map((r) => Object.fromEntries(r.url.searchParams))).toContainEqual(wanted),
    );
    expect(router.state.location.search).not.toContain("page=");
  });

  it("sorts on the server: a header click asks ascending, a second click descending", async () => {
    const stub = serve("technician");
    renderApp("/files");
    await rows();
    fireEvent.click(screen.getByRole("button", { name: /True peak/ }));
    await waitFor(() => expect(lastListQuery(stub).get("sort")).toBe("truePeakDbtp"));
    expect(lastListQuery(stub).get("order")).toBe("asc");
    await waitFor(() => expect(screen.getByRole("columnheader", { name: /True peak/ }).getAttribute("aria-sort")).toBe("ascending"));
    fireEvent.click(screen.getByRole("button", { name: /True peak/ }));
    await waitFor(() => expect(lastListQuery(stub).get("order")).toBe("desc"));
  });

  it("pages through the server's total and prefetches the next page", async () => {
    const stub = serve("technician", 120);
    renderApp("/files");
    await rows();
    expect(screen.getByText(/1–50 of 120 files/)).toBeTruthy();
    // The next page is warmed in the background before anyone asks for it.
    await waitFor(() => expect(stub.requests("GET", "/api/files").some((r) => r.url.searchParams.get("page") === "2")).toBe(true));
    fireEvent.click(screen.getByRole("button", { name: /Next/ }));
    await screen.findByText(/51–100 of 120 files/);
    expect(screen.getByRole("link", { name: "ferry/interview-51.wav" })).toBeTruthy();
    fireEvent.click(screen.getByRole("button", { name: /Next/ }));
    await screen.findByText(/101–120 of 120 files/);
    expect((screen.getByRole("button", { name: /Next/ }) as HTMLButtonElement).disabled).toBe(true);
    // Pages after the first are asked for by the previous page's cursor, not by counting rows off.
    const asked = stub.requests("GET", "/api/files").map((r) => [r.url.searchParams.get("page"), r.url.searchParams.get("after")]);
    expect(asked).toContainEqual(["2", "after-page-1"]);
    expect(asked).toContainEqual(["3", "after-page-2"]);
    // Previous from page 3 reads page 2 by page 3's own cursor.
    fireEvent.click(screen.getByRole("button", { name: /Previous/ }));
    await screen.findByText(/51–100 of 120 files/);
    expect(stub.requests("GET", "/api/files").some((r) => r.url.searchParams.get("before") === "before-page-3")).toBe(true);
  });

  it("says 'about' for an estimated total and lets Next follow the cursor", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("technician") } })
      .on("GET", "/api/files", {
        body: { ...filePage([fileSummary(1), fileSummary(2)], 48_324), totalIsEstimate: true, nextCursor: "more" },
      });
    renderApp("/files");
    await screen.findByText(/1–2 of about 48,300 files · page 1 of about 967/);
    expect((screen.getByRole("button", { name: /Next/ }) as HTMLButtonElement).disabled).toBe(false);
  });

  it("moves with j and k and opens the active row with Enter", async () => {
    serve("technician");
    const { router } = renderApp("/files");
    const list = await rows();
    fireEvent.keyDown(document.body, { key: "j" });
    fireEvent.keyDown(document.body, { key: "j" });
    expect(list[1].getAttribute("aria-current")).toBe("true");
    expect(document.activeElement).toBe(within(list[1]).getByRole("link"));
    fireEvent.keyDown(document.activeElement ?? document.body, { key: "j" });
    fireEvent.keyDown(document.activeElement ?? document.body, { key: "j" });
    expect(list[2].getAttribute("aria-current")).toBe("true");
    fireEvent.keyDown(document.activeElement ?? document.body, { key: "k" });
    expect(list[1].getAttribute("aria-current")).toBe("true");
    expect(list[2].getAttribute("aria-current")).toBeNull();
    fireEvent.keyDown(document.activeElement ?? document.body, { key: "Enter" });
    await waitFor(() => expect(router.state.location.pathname).toBe("/files/2"));
  });

  it("ignores the shortcuts while typing in a filter", async () => {
    serve("technician");
    renderApp("/files");
    const list = await rows();
    const search = screen.getByLabelText("Search paths");
    fireEvent.keyDown(search, { key: "j" });
    expect(list.every((r) => r.getAttribute("aria-current") === null)).toBe(true);
  });

  it.each<Role>(["technician", "auditor"])("offers no selection or bulk review to a %s", async (role) => {
    serve(role);
    renderApp("/files");
    await rows();
    expect(screen.queryByRole("checkbox")).toBeNull();
    fireEvent.keyDown(document.body, { key: "j" });
    fireEvent.keyDown(document.body, { key: "x" });
    expect(screen.queryByRole("form", { name: /selected files/ })).toBeNull();
  });

  it("lets a supervisor change the review state of selected files and then re-reads the list", async () => {
    const stub = serve("supervisor").on("POST", "/api/files/review", { body: { updated: 2 } });
    renderApp("/files");
    await rows();
    const list = await rows();
    fireEvent.click(screen.getByRole("checkbox", { name: "Select ferry/interview-01.wav" }));
    // Clicking in a row makes it the active one; j then moves to the second and x selects it.
    expect(list[0].getAttribute("aria-current")).toBe("true");
    fireEvent.keyDown(document.body, { key: "j" });
    fireEvent.keyDown(document.activeElement ?? document.body, { key: "x" });
    const bar = screen.getByRole("form", { name: /selected files/ });
    expect(within(bar).getByText("2 files selected")).toBeTruthy();
    const apply = within(bar).getByRole("button", { name: "Apply to 2" }) as HTMLButtonElement;
    // Accepting needs no reason; flagging does (issue #16), so the button waits for one.
    expect(apply.disabled).toBe(false);
    fireEvent.change(within(bar).getByLabelText("New review state"), { target: { value: "flagged" } });
    expect(apply.disabled).toBe(true);
    fireEvent.change(within(bar).getByLabelText(/Reason/), { target: { value: "clipping on both" } });
    const listReadsBefore = stub.requests("GET", "/api/files").length;
    fireEvent.click(apply);

    await waitFor(() => expect(stub.requests("POST", "/api/files/review")).toHaveLength(1));
    const [post] = stub.requests("POST", "/api/files/review");
    expect(post.body).toEqual({ ids: [1, 2], reviewState: "flagged", reason: "clipping on both" });
    expect(post.headers.get("x-tidemark-request")).toBe("1");
    await waitFor(() => expect(stub.requests("GET", "/api/files").length).toBeGreaterThan(listReadsBefore));
    await waitFor(() => expect(screen.queryByRole("form", { name: /selected files/ })).toBeNull());
  });

  it("says so when the list cannot load", async () => {
    serve("technician").on("GET", "/api/files", { status: 500, body: { error: { code: "internal", message: "The database did not answer." } } });
    renderApp("/files");
    const alert = await screen.findByRole("alert");
    expect(alert.textContent).toContain("The file list could not load");
    expect(alert.textContent).toContain("The database did not answer.");
  });

  it("filters by container (issue #17's FLAC, AIFF and AIFF-C among them), from the select and from a link", async () => {
    const stub = serve("technician");
    const { router } = renderApp("/files?container=flac");
    await rows();
    const select = screen.getByLabelText("Container") as HTMLSelectElement;
    expect(select.value).toBe("flac");
    expect(lastListQuery(stub).get("container")).toBe("flac");
    expect([...select.options].map((o) => [o.value, o.text])).toEqual([
      ["", "Any"],
      ["wav", "WAV"],
      ["bwf", "BWF"],
      ["rf64", "RF64"],
      ["flac", "FLAC"],
      ["aiff", "AIFF"],
      ["aifc", "AIFF-C"],
    ]);
    fireEvent.change(select, { target: { value: "aifc" } });
    await waitFor(() => expect(router.state.location.search).toBe("?container=aifc"));
    await waitFor(() => expect(lastListQuery(stub).get("container")).toBe("aifc"));
    fireEvent.change(select, { target: { value: "" } });
    await waitFor(() => expect(router.state.location.search).toBe(""));
    await waitFor(() => expect(lastListQuery(stub).has("container")).toBe(false));
  });

  it("shows a name that is not UTF-8 as the server sends it, with U+FFFD where the bytes were (issue #17)", async () => {
    const latin1 = fileSummary(1, {
      path: "R\uFFFDels/caf\uFFFD.flac",
      format: { container: "flac", encoding: "pcm", sampleRateHz: 48000, bitDepth: 24, channels: 2, durationSeconds: 4 },
    });
    serve("technician").on("GET", "/api/files", { body: filePage([latin1]) });
    renderApp("/files");
    const link = await screen.findByRole("link", { name: "R\uFFFDels/caf\uFFFD.flac" });
    expect(link.getAttribute("href")).toBe("/files/1");
    expect(screen.getByText("48 kHz · 24-bit · stereo")).toBeTruthy();
  });

  it("drops a container the contract does not know from the address bar instead of sending it", async () => {
    const stub = serve("technician");
    renderApp("/files?container=mp3");
    await rows();
    expect(lastListQuery(stub).has("container")).toBe(false);
  });

  it("tells an empty filtered view apart from an empty archive", async () => {
    serve("technician").on("GET", "/api/files", { body: filePage([], 0) });
    renderApp("/files?verdict=error");
    expect(await screen.findByText("No files match these filters")).toBeTruthy();
  });
});
