import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor, within } from "@testing-library/react";
import type { FileDetailDto, Role } from "@tidemark/shared/types/api";
import { deferred, stubFetch, type StubReply } from "./fetchStub.ts";
import { SPECTROGRAM_MARGINS } from "@tidemark/shared/render/layout";
import { wracklineHex } from "@tidemark/shared/render/colourMap";
import { fileDetail, user } from "./fixtures.ts";
import { placeFindings } from "../../web/src/components/file/plotGeometry.ts";
import { renderApp } from "./renderApp.tsx";

afterEach(() => vi.unstubAllGlobals());

function serve(role: Role, detail: FileDetailDto = fileDetail(7)) {
  return stubFetch()
    .on("GET", "/api/session", { body: { user: user(role) } })
    .on("GET", "/api/files/7", { body: detail });
}

/** jsdom does not decode images: give the PNG a natural size and fire its load event. */
function loadImage(alt: RegExp, width: number, height: number) {
  const img = screen.getByAltText(alt) as HTMLImageElement;
  Object.defineProperty(img, "naturalWidth", { value: width });
  Object.defineProperty(img, "naturalHeight", { value: height });
  fireEvent.load(img);
  return img;
}

describe("File page", () => {
  it("names the container as its format is called (AIFF-C, not the code aifc) and the G.711 encoding", async () => {
    const base = fileDetail(7);
    serve("technician", fileDetail(7, { format: { ...base.format!, container: "aifc", encoding: "alaw", bitDepth: 8 } }));
    renderApp("/files/7");
    await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
    const container = screen.getByText("Container");
    expect(container.nextElementSibling?.textContent).toBe("AIFF-C");
    expect(screen.getByText("Encoding").nextElementSibling?.textContent).toBe("A-law");
  });

  it("lays finding markers over the plot area at their time, and highlights the one picked in the table", async () => {
    serve("technician");
    renderApp("/files/7");
    await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
    expect((screen.getByAltText(/^Spectrogram of/) as HTMLImageElement).getAttribute("src")).toBe("/api/files/7/spectrogram.png");
    loadImage(/^Spectrogram of/, 1600, 600);

    const marker = screen.getByRole("button", { name: /clipping at 0:30.00, channel 1/ });
    // 30 s of 120 s is a quarter of the plot width; the plot sits inside the image's margins.
    expect(marker.style.left).toBe("25%");
    const plot = marker.parentElement as HTMLElement;
    expect(plot.hasAttribute("data-plot-area")).toBe(true);
    // The renderer's margins, as percentages of this 1600 × 600 image.
    expect(parseFloat(plot.style.left)).toBeCloseTo((SPECTROGRAM_MARGINS.leftPx / 1600) * 100, 3);
    expect(parseFloat(plot.style.right)).toBeCloseTo((SPECTROGRAM_MARGINS.rightPx / 1600) * 100, 3);
    expect(parseFloat(plot.style.top)).toBeCloseTo((SPECTROGRAM_MARGINS.topPx / 600) * 100, 3);
    expect(marker.getAttribute("aria-pressed")).toBe("false");
    // A whole-file finding has no place on the time axis.
    expect(screen.queryByRole("button", { name: /^hum at/ })).toBeNull();

    fireEvent.click(within(screen.getByRole("region", { name: /Findings/ })).getByRole("button", { name: "0:30.00 – 0:30.50" }));
    expect(marker.getAttribute("aria-pressed")).toBe("true");
    expect(within(screen.getByRole("region", { name: /Findings/ })).getByRole("button", { name: "whole file" })).toHaveProperty("disabled", true);
  });

  it("keys the spectrogram's level colours with the same map as the PNG, quiet to loud", async () => {
    serve("technician");
    renderApp("/files/7");
    await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
    const scale = screen.getByRole("img", { name: /^colour scale from −130 dBFS.* to 0 dBFS/ });
    const gradient = scale.style.backgroundImage;
    // The map's first and last colours at the gradient's ends (jsdom may spell them as rgb()).
    const rgb = (hex: string) => `rgb(${[1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16)).join(", ")})`;
    const ends = [wracklineHex(0), wracklineHex(1)];
    expect(gradient.startsWith("linear-gradient(to right, ")).toBe(true);
    const stops = gradient.slice("linear-gradient(to right, ".length, -1);
    expect(stops.startsWith(ends[0]) || stops.startsWith(rgb(ends[0]))).toBe(true);
    expect(stops.endsWith(`${ends[1]} 100%`) || stops.endsWith(`${rgb(ends[1])} 100%`)).toBe(true);
    expect(scale.closest("figure")?.textContent).toContain("−130");
  });

  it("cautions about the volume when the findings say the file is loud or clicks, and not otherwise", async () => {
    serve("technician");
    const { unmount } = renderApp("/files/7");
    await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
    expect(screen.getByRole("note").textContent).toMatch(/volume down.*clipping/);
    unmount();

    const hum = fileDetail(7).findings.filter((f) => f.code === "hum");
    serve("technician", fileDetail(7, { findings: hum }));
    renderApp("/files/7");
    await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
    expect(screen.queryByRole("note")).toBeNull();
  });

  it("tells the reviewer when the spectrogram image cannot be loaded", async () => {
    serve("technician");
    renderApp("/files/7");
    await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
    fireEvent.error(screen.getByAltText(/^Spectrogram of/));
    expect(screen.getByText(/spectrogram image could not be loaded/)).toBeTruthy();
  });

  it("groups the measurements and draws the band energies", async () => {
    serve("auditor");
    const { container } = renderApp("/files/7");
    await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
    for (const group of ["Levels", "Loudness", "Spectrum", "Stereo and channels", "Format"]) {
      expect(screen.getByRole("region", { name: group })).toBeTruthy();
    }
    expect(within(screen.getByRole("region", { name: "Loudness" })).getByText("\u221218.4 LUFS")).toBeTruthy();
    expect(within(screen.getByRole("region", { name: "Spectrum" })).getByText("\u2212∞ dBFS")).toBeTruthy();
    const bars = [...container.querySelectorAll<SVGRectElement>("rect[data-band-hz]")];
    const height = (hz: number) => Number(bars.find((b) => b.dataset.bandHz === String(hz))?.getAttribute("height"));
    expect(bars).toHaveLength(3);
    expect(height(1000)).toBeGreaterThan(height(125));
    expect(height(8000)).toBe(0);
  });

  it.each<Role>(["technician", "auditor"])("hides the review control from a %s", async (role) => {
    serve(role);
    renderApp("/files/7");
    await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
    expect(screen.getByRole("region", { name: "Review" })).toBeTruthy();
    expect(screen.queryByRole("form", { name: "Change review state" })).toBeNull();
    expect(screen.queryByLabelText("New review state")).toBeNull();
  });

  it("lets a technician comment but not an auditor", async () => {
    serve("auditor");
    const first = renderApp("/files/7");
    await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
    expect(screen.queryByLabelText("Add a comment")).toBeNull();
    expect(screen.getByText(/can read comments but not add them/)).toBeTruthy();
    first.unmount();

    serve("technician");
    renderApp("/files/7");
    expect(await screen.findByLabelText("Add a comment")).toBeTruthy();
  });

  it("posts a comment, shows it at once and re-reads the file", async () => {
    const comment = {
      id: 90,
      author: { id: 1, email: "technician@harbourside.test", name: "Technician Demo" },
      body: "Crackle at 0:30 on the left.",
      createdAt: "2026-11-21T08:00:00.000Z",
      atSeconds: null,
      channel: null,
    };
    const stub = serve("technician").on("POST", "/api/files/7/comments", { status: 201, body: comment });
    renderApp("/files/7");
    fireEvent.change(await screen.findByLabelText("Add a comment"), { target: { value: "  Crackle at 0:30 on the left. " } });
    const readsBefore = stub.requests("GET", "/api/files/7").length;
    fireEvent.click(screen.getByRole("button", { name: "Post comment" }));
    expect(await screen.findByText("Crackle at 0:30 on the left.")).toBeTruthy();
    const [post] = stub.requests("POST", "/api/files/7/comments");
    // No close-up is open, so the comment is not anchored to a time.
    expect(post.body).toEqual({ body: "Crackle at 0:30 on the left." });
    expect(post.headers.get("x-tidemark-request")).toBe("1");
    await waitFor(() => expect(stub.requests("GET", "/api/files/7").length).toBeGreaterThan(readsBefore));
    expect((screen.getByLabelText("Add a comment") as HTMLTextAreaElement).value).toBe("");
  });

  it("shows a supervisor's new review state at once and rolls it back when the server refuses", async () => {
    const held = deferred<StubReply>();
    const stub = serve("supervisor").on("PATCH", "/api/files/7", () => held.promise);
    renderApp("/files/7");
    const review = await screen.findByRole("region", { name: "Review" });
    expect(within(review).getByText("pending")).toBeTruthy();

    const form = within(review).getByRole("form", { name: "Change review state" });
    fireEvent.change(within(form).getByLabelText("New review state"), { target: { value: "flagged" } });
    fireEvent.change(within(form).getByLabelText(/Reason/), { target: { value: "clipping at 0:30" } });
    fireEvent.click(within(form).getByRole("button", { name: "Save review state" }));

    // Optimistic: the header and the panel already say flagged while the request is open.
    await waitFor(() => expect(within(review).getByText("Current state:").querySelector("span")?.textContent).toBe("flagged"));
    expect(stub.requests("PATCH", "/api/files/7")[0].body).toEqual({ reviewState: "flagged", reason: "clipping at 0:30" });

    held.resolve({ status: 409, body: { error: { code: "conflict", message: "Someone changed this file a moment ago." } } });
    expect((await within(review).findByRole("alert")).textContent).toContain("Someone changed this file a moment ago.");
    expect(within(review).getByText("Current state:").querySelector("span")?.textContent).toBe("pending");
  });

  it("keeps the saved state and refreshes the file after a successful review", async () => {
    let state: "pending" | "accepted" = "pending";
    const stub = stubFetch()
      .on("GET", "/api/session", { body: { user: user("admin") } })
      .on("GET", "/api/files/7", () => ({ body: fileDetail(7, { reviewState: state }) }))
      .on("PATCH", "/api/files/7", () => {
        state = "accepted";
        return { body: fileDetail(7, { reviewState: "accepted" }) };
      });
    renderApp("/files/7");
    const review = await screen.findByRole("region", { name: "Review" });
    const form = within(review).getByRole("form", { name: "Change review state" });
    fireEvent.change(within(form).getByLabelText(/Reason/), { target: { value: "clean transfer" } });
    fireEvent.click(within(form).getByRole("button", { name: "Save review state" }));
    await waitFor(() => expect(stub.requests("GET", "/api/files/7").length).toBe(2));
    expect(within(review).getByText("Current state:").querySelector("span")?.textContent).toBe("accepted");
  });

  it("says there is no such file on a 404", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("technician") } })
      .on("GET", "/api/files/404", { status: 404, body: { error: { code: "not-found", message: "No file result 404." } } });
    renderApp("/files/404");
    expect(await screen.findByText("No such file")).toBeTruthy();
  });
});

describe("marker placement", () => {
  const finding = (id: number, startSeconds: number | null, channel: number | null = null) =>
    ({ id, code: "clipping", severity: "fail", channel, startSeconds, endSeconds: startSeconds, message: "" }) as const;

  it("stacks handles that would collide into separate lanes and leaves whole-file findings out", () => {
    const placed = placeFindings([finding(1, 0, 0), finding(2, 0, 1), finding(3, 50), finding(4, 0.5), finding(5, null)], 100);
    const lane = (id: number) => placed.find((p) => p.finding.id === id)?.lane;
    expect(placed.map((p) => p.finding.id)).not.toContain(5);
    expect(new Set([lane(1), lane(2), lane(4)]).size).toBe(3);
    expect(lane(3)).toBe(0);
    expect(placed.find((p) => p.finding.id === 3)?.leftPercent).toBe(50);
  });
});
