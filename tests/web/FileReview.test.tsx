/**
 * Issue #16 on the file page, in jsdom with a mocked API: level read-outs, the close-up player (gain,
 * caution, solo, playhead), shortcuts, reason rules, previous/next file and anchored comments.
 * jsdom decodes no audio and draws no canvas: the <audio> element's play/pause are stand-ins and Web Audio
 * is a recording fake; the real browser path is tests/e2e/review.test.ts.
 */
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { act, fireEvent, screen, waitFor, within } from "@testing-library/react";
import { spectrogramPlotArea } from "@tidemark/shared/render/layout";
import { COLOUR_MAP_SIZE, wracklineColourMap } from "@tidemark/shared/render/colourMap";
import { SPECTROGRAM_DB_RANGE } from "@tidemark/shared/render/spectrogramImage";
import type { CommentDto, FileDetailDto, Role } from "@tidemark/shared/types/api";
import { stubFetch, type FetchStub } from "./fetchStub.ts";
import { filePage, fileSummary, user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";
import { CLOSEUP, levelGridJson, loudnessCurveJson, reviewDetail } from "./reviewFixtures.ts";
import { charts } from "./uplotMock.ts";
import { cellAt, decodeLevelGrid, readoutOf } from "../../web/src/components/file/levelGrid.ts";
import { curveChartData, decodeLoudnessCurve, loudnessBand } from "../../web/src/components/file/loudnessCurve.ts";
import { clampGainDb, gainDbToLinear, GAIN_MAX_DB, GAIN_START_DB } from "../../web/src/components/file/playbackSafety.ts";

/** jsdom has no PointerEvent; React listens for "pointermove", so a MouseEvent of that name carries clientX/Y. */
class FakePointerEvent extends MouseEvent {}

let played: HTMLMediaElement[] = [];

beforeEach(() => {
  window.sessionStorage.clear();
  played = [];
  vi.stubGlobal("PointerEvent", FakePointerEvent);
  vi.spyOn(HTMLMediaElement.prototype, "play").mockImplementation(function (this: HTMLMediaElement) {
    played.push(this);
    this.dispatchEvent(new Event("play"));
    return Promise.resolve();
  });
  vi.spyOn(HTMLMediaElement.prototype, "pause").mockImplementation(function (this: HTMLMediaElement) {
    this.dispatchEvent(new Event("pause"));
  });
});

afterEach(() => {
  vi.unstubAllGlobals();
  vi.restoreAllMocks();
});

function serve(role: Role = "supervisor", detail: FileDetailDto = reviewDetail(), grid = levelGridJson()): FetchStub {
  return stubFetch()
    .on("GET", "/api/session", { body: { user: user(role) } })
    .on("GET", "/api/files/7", { body: detail })
    .on("GET", "/api/files/7/level-grid", { body: grid })
    .on("GET", "/api/files/7/loudness-curve", { body: loudnessCurveJson() })
    .on("GET", "/api/files", { body: filePage([fileSummary(6), fileSummary(7), fileSummary(8)]) });
}

function loadImage(img: HTMLElement, width: number, height: number) {
  Object.defineProperty(img, "naturalWidth", { value: width });
  Object.defineProperty(img, "naturalHeight", { value: height });
  fireEvent.load(img);
}

async function openPage(path = "/files/7") {
  const view = renderApp(path);
  await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
  return view;
}

function findingsRegion() {
  return screen.getByRole("region", { name: /^Findings/ });
}

async function openCloseup() {
  fireEvent.click(within(findingsRegion()).getByRole("button", { name: "0:30.00 – 0:30.50" }));
  const img = await screen.findByAltText(/^Close-up spectrogram of/);
  loadImage(img, 1600, 600);
  loadImage(screen.getByAltText(/^Close-up waveform of/), 1600, 120);
  return document.querySelector("audio[data-excerpt]") as HTMLAudioElement;
}

describe("level read-out", () => {
  it("maps a point of the PNG to the contract's cell and reads that cell's time, frequency and dBFS", () => {
    const grid = decodeLevelGrid(levelGridJson([{ column: 5, row: 2, level: 204 }]));
    // In PNG pixels of a 1600 × 600 overview: plot area from layout.ts, the formula from contract §2.
    const plot = spectrogramPlotArea(1600, 600);
    const x = plot.left + (5.5 / 8) * plot.width;
    const y = plot.top + 0.3 * plot.height; // 0.3 × 4 rows → 1 from the top → row 4 − 1 − 1 = 2
    const cell = cellAt(grid, plot, x, y);
    expect(cell).toEqual({ column: 5, row: 2 });
    const r = readoutOf(grid, cell!);
    expect(r.seconds).toBeCloseTo(82.5, 6); // centre of column 5 at 15 s per column
    expect(r.frequencyHz).toBe(5000);
    // 204/255 of the way from −120 to 0 dBFS, linear in dB (contract §2).
    expect(r.levelDbfs).toBeCloseTo(-120 + (204 / 255) * 120, 6);
    expect(readoutOf(grid, { column: 0, row: 0 }).levelDbfs).toBeNull(); // 0 means at or below dbMin
    expect(cellAt(grid, plot, plot.left - 1, y)).toBeNull();
    expect(cellAt(grid, plot, x, plot.top + plot.height)).toBeNull();
    // Bottom-right corner: last column, row 0 (the lowest frequency).
    expect(cellAt(grid, plot, plot.left + plot.width - 0.01, plot.top + plot.height - 0.01)).toEqual({ column: 7, row: 0 });
  });

  it("refuses a grid whose levels do not fill columns × rows, naming both numbers", () => {
    const bad = { ...levelGridJson(), columns: 9 };
    expect(() => decodeLevelGrid(bad)).toThrow(/columns × rows = 36 bytes, got 32/);
    expect(() => decodeLevelGrid({ ...levelGridJson(), schema: "x" })).toThrow(/tidemark.level-grid\/1/);
  });

  it("shows time, frequency and level under the pointer on the overview spectrogram", async () => {
    serve("auditor", reviewDetail(), levelGridJson([{ column: 5, row: 2, level: 204 }]));
    await openPage();
    loadImage(screen.getByAltText(/^Spectrogram of/), 1600, 600);
    await screen.findByText(/Point at the spectrogram/);
    const plot = document.querySelector("[data-plot-area]") as HTMLElement;
    // The plot area as laid out on screen: 800 × 400 CSS pixels at (100, 50).
    plot.getBoundingClientRect = () => ({ left: 100, top: 50, width: 800, height: 400, right: 900, bottom: 450, x: 100, y: 50, toJSON: () => ({}) });
    fireEvent.pointerMove(plot, { clientX: 100 + 800 * (5.5 / 8), clientY: 50 + 400 * 0.3 });
    const readout = document.querySelector("[data-readout]") as HTMLElement;
    expect(readout.textContent).toContain("Time 1:22.50");
    expect(readout.textContent).toContain("Frequency 5000 Hz");
    expect(readout.textContent).toContain("Level \u221224.0 dBFS");
    // The swatch is the shared palette's colour for that level on the renderer's dB scale, as in the PNG.
    const { minDb, maxDb } = SPECTROGRAM_DB_RANGE;
    const index = Math.round(((-120 + (204 / 255) * 120 - minDb) / (maxDb - minDb)) * (COLOUR_MAP_SIZE - 1));
    const map = wracklineColourMap();
    const swatch = readout.querySelector("span[aria-hidden='true']") as HTMLElement;
    expect(swatch.style.backgroundColor).toBe(`rgb(${map[3 * index]}, ${map[3 * index + 1]}, ${map[3 * index + 2]})`);
    fireEvent.pointerMove(plot, { clientX: 101, clientY: 449 });
    expect(document.querySelector("[data-readout]")?.textContent).toContain("Level \u2264 \u2212120 dBFS");
    fireEvent.pointerLeave(plot);
    expect(document.querySelector("[data-readout]")?.getAttribute("data-readout")).toBe("none");

    // From the keyboard: the first arrow puts the cross-hair mid-plot (column 4, row 2), the next ones move it.
    const group = screen.getByRole("group", { name: /Spectrogram read-out/ });
    expect(group.tabIndex).toBe(0);
    fireEvent.keyDown(group, { key: "ArrowRight" });
    expect(document.querySelector("[data-readout]")?.textContent).toContain("Time 1:07.50"); // (4 + 0.5) × 15 s
    fireEvent.keyDown(group, { key: "ArrowRight" });
    fireEvent.keyDown(group, { key: "ArrowUp" });
    expect(document.querySelector("[data-readout]")?.textContent).toContain("Frequency 15.00 kHz");
    fireEvent.keyDown(group, { key: "ArrowDown" });
    expect(document.querySelector("[data-readout]")?.textContent).toContain("Time 1:22.50");
    expect(document.querySelector("[data-readout]")?.textContent).toContain("Level \u221224.0 dBFS");
    expect((document.querySelector("[data-crosshair]") as HTMLElement).style.left).toBe("68.75%");
    fireEvent.keyDown(group, { key: "Escape" });
    expect(document.querySelector("[data-crosshair]")).toBeNull();
  });
});

describe("close-up player", () => {
  it("never sets a gain above unity and starts 20 dB below it", () => {
    expect(GAIN_START_DB).toBe(-20);
    expect(GAIN_MAX_DB).toBe(0);
    expect(gainDbToLinear(GAIN_START_DB)).toBeCloseTo(0.1, 6); // 10^(−20/20)
    for (const db of [0, 0.5, 6, 40, Number.POSITIVE_INFINITY, Number.NaN]) expect(gainDbToLinear(db)).toBeLessThanOrEqual(1);
    expect(clampGainDb(12)).toBe(0);
  });

  it("opens the finding's close-up with its span marked, quiet from the start, and cautions once per session", async () => {
    serve();
    const first = await openPage();
    const audio = await openCloseup();
    expect(audio.getAttribute("src")).toBe(CLOSEUP.excerptUrl);
    // Without Web Audio (jsdom) the element's own volume carries the gain: 20 dB down.
    expect(audio.volume).toBeCloseTo(0.1, 6);
    const gain = screen.getByRole("slider") as HTMLInputElement;
    expect(gain.value).toBe("-20");
    expect(gain.max).toBe("0");
    // The span of finding 11 (30–30.5 s) inside the window 28–32.5 s.
    const span = document.querySelector("[data-closeup-span='11']") as HTMLElement;
    expect(parseFloat(span.style.left)).toBeCloseTo((2 / 4.5) * 100, 3);
    // The overview shows where the window lies in the whole file (28 s of 120 s).
    loadImage(screen.getByAltText(/^Spectrogram of/), 1600, 600);
    const windowBox = document.querySelector("[data-overview-window]") as HTMLElement;
    expect(parseFloat(windowBox.style.left)).toBeCloseTo((28 / 120) * 100, 3);

    fireEvent.click(screen.getByRole("button", { name: "Play the excerpt" }));
    const caution = screen.getByRole("alertdialog");
    expect(caution.textContent).toMatch(/headphones/);
    expect(played).toHaveLength(0);
    fireEvent.click(within(caution).getByRole("button", { name: /Volume is down, play/ }));
    await waitFor(() => expect(played).toHaveLength(1));
    expect(screen.queryByRole("alertdialog")).toBeNull();
    fireEvent.click(await screen.findByRole("button", { name: "Pause the excerpt" }));

    // Same session, another visit: no caution.
    first.unmount();
    serve();
    await openPage();
    await openCloseup();
    fireEvent.click(screen.getByRole("button", { name: "Play the excerpt" }));
    await waitFor(() => expect(played).toHaveLength(2));
    expect(screen.queryByRole("alertdialog")).toBeNull();
  });

  it("routes through Web Audio: gain 0.1 before the first sound, capped at unity, solo feeds one channel to both ears", async () => {
    const gains: Array<{ gain: { value: number } }> = [];
    const splitterLinks: number[][] = [];
    const node = () => ({ connect: vi.fn(), disconnect: vi.fn() });
    class FakeAudioContext {
      state = "running";
      destination = {};
      createMediaElementSource = () => node();
      createChannelSplitter = () => ({
        connect: (_to: unknown, output: number, input: number) => splitterLinks.push([output, input]),
        disconnect: () => splitterLinks.splice(0),
      });
      createChannelMerger = () => node();
      createGain = () => {
        const g = { ...node(), gain: { value: 1 } };
        gains.push(g);
        return g;
      };
      resume = () => Promise.resolve();
      close = () => Promise.resolve();
    }
    vi.stubGlobal("AudioContext", FakeAudioContext);
    window.sessionStorage.setItem("tidemark.hearingCautionSeen", "1");
    serve();
    await openPage();
    const audio = await openCloseup();
    fireEvent.click(screen.getByRole("button", { name: "Play the excerpt" }));
    await waitFor(() => expect(played).toHaveLength(1));
    expect(gains).toHaveLength(1);
    expect(gains[0].gain.value).toBeCloseTo(0.1, 6);
    expect(audio.volume).toBe(1); // the graph carries the gain, not the element
    expect(splitterLinks).toEqual([
      [0, 0],
      [1, 1],
    ]);

    const slider = screen.getByRole("slider");
    fireEvent.change(slider, { target: { value: "12" } });
    expect(gains[0].gain.value).toBeLessThanOrEqual(1);
    fireEvent.change(slider, { target: { value: "-6" } });
    expect(gains[0].gain.value).toBeCloseTo(10 ** (-6 / 20), 6);

    fireEvent.change(screen.getByRole("combobox", { name: /Channel/ }), { target: { value: "1" } });
    await waitFor(() =>
      expect(splitterLinks).toEqual([
        [1, 0],
        [1, 1],
      ]),
    );
  });

  it("moves the playhead with the excerpt's time and seeks where the picture is clicked", async () => {
    serve();
    await openPage();
    const audio = await openCloseup();
    const playhead = document.querySelector("[data-playhead]") as HTMLElement;
    expect(parseFloat(playhead.style.left)).toBe(0);
    act(() => {
      audio.currentTime = 2.25;
      audio.dispatchEvent(new Event("timeupdate"));
    });
    expect(parseFloat((document.querySelector("[data-playhead]") as HTMLElement).style.left)).toBeCloseTo(50, 3);
    expect(screen.getByLabelText("Playhead position").textContent).toBe("0:30.25");

    const plot = document.querySelector("[data-closeup-plot]") as HTMLElement;
    plot.getBoundingClientRect = () => ({ left: 0, top: 0, width: 900, height: 300, right: 900, bottom: 300, x: 0, y: 0, toJSON: () => ({}) });
    fireEvent.pointerDown(plot, { clientX: 225, clientY: 10 });
    expect(audio.currentTime).toBeCloseTo(1.125, 6); // a quarter of 4.5 s
  });

  it("says why a finding has no close-up", async () => {
    serve();
    await openPage();
    fireEvent.click(within(findingsRegion()).getByRole("button", { name: "1:30.00 – 1:30.04" }));
    expect(await screen.findByText(/past the cap/)).toBeTruthy();
  });
});

describe("keyboard", () => {
  it("documents its shortcuts and moves between findings, plays, accepts and flags", async () => {
    window.sessionStorage.setItem("tidemark.hearingCautionSeen", "1");
    serve();
    await openPage();
    fireEvent.keyDown(document.body, { key: "?" });
    const help = screen.getByRole("dialog", { name: "Keyboard shortcuts" });
    for (const key of ["Space", "n", "p", "a", "f", "[", "]"]) expect(within(help).getByText(key, { selector: "kbd" })).toBeTruthy();
    fireEvent.keyDown(document.body, { key: "Escape" });
    expect(screen.queryByRole("dialog", { name: "Keyboard shortcuts" })).toBeNull();

    // With no close-up open, Space is left to scroll the page.
    const space = new KeyboardEvent("keydown", { key: " ", bubbles: true, cancelable: true });
    document.body.dispatchEvent(space);
    expect(space.defaultPrevented).toBe(false);

    // n: the first timed finding (clipping at 0:30) opens its close-up; n again: the dropout; p: back.
    fireEvent.keyDown(document.body, { key: "n" });
    expect(await screen.findByAltText(/^Close-up spectrogram of/)).toBeTruthy();
    fireEvent.keyDown(document.body, { key: "n" });
    expect(await screen.findByText(/past the cap/)).toBeTruthy();
    fireEvent.keyDown(document.body, { key: "p" });
    await screen.findByAltText(/^Close-up spectrogram of/);
    fireEvent.keyDown(document.body, { key: " " });
    await waitFor(() => expect(played).toHaveLength(1));
    fireEvent.keyDown(document.body, { key: " " });
    expect(await screen.findByRole("button", { name: "Play the excerpt" })).toBeTruthy();
    const audio = document.querySelector("audio[data-excerpt]") as HTMLAudioElement;
    expect(audio.loop).toBe(false);
    fireEvent.keyDown(document.body, { key: "l" });
    await waitFor(() => expect(audio.loop).toBe(true));
    expect((screen.getByRole("checkbox", { name: "Loop" }) as HTMLInputElement).checked).toBe(true);
    // , and . step the playhead by 0.1 s, Shift by 1 s, inside the window; letters still work on the slider.
    fireEvent.keyDown(document.body, { key: "." });
    fireEvent.keyDown(document.body, { key: ">", shiftKey: true });
    expect(audio.currentTime).toBeCloseTo(1.1, 6);
    fireEvent.keyDown(screen.getByRole("slider"), { key: "," });
    expect(audio.currentTime).toBeCloseTo(1.0, 6);
    fireEvent.keyDown(screen.getByRole("slider"), { key: "<", shiftKey: true });
    fireEvent.keyDown(screen.getByRole("slider"), { key: "<", shiftKey: true });
    expect(audio.currentTime).toBe(0);

    const form = screen.getByRole("form", { name: "Change review state" });
    fireEvent.keyDown(document.body, { key: "f" });
    expect((within(form).getByLabelText("New review state") as HTMLSelectElement).value).toBe("flagged");
    expect(document.activeElement).toBe(within(form).getByLabelText(/Reason/));
    // Typing in the reason box is not a shortcut.
    fireEvent.keyDown(document.activeElement as HTMLElement, { key: "a" });
    expect((within(form).getByLabelText("New review state") as HTMLSelectElement).value).toBe("flagged");
    (document.activeElement as HTMLElement).blur();
    fireEvent.keyDown(document.body, { key: "a" });
    expect((within(form).getByLabelText("New review state") as HTMLSelectElement).value).toBe("accepted");
  });
});

describe("review reasons", () => {
  it("saves an acceptance without a reason but asks for one to flag or send back", async () => {
    const stub = serve().on("PATCH", "/api/files/7", { body: reviewDetail({ reviewState: "accepted" }) });
    await openPage();
    const form = screen.getByRole("form", { name: "Change review state" });
    const save = within(form).getByRole("button", { name: "Save review state" }) as HTMLButtonElement;
    const reason = within(form).getByLabelText(/Reason/) as HTMLInputElement;
    expect((within(form).getByLabelText("New review state") as HTMLSelectElement).value).toBe("accepted");
    expect(reason.required).toBe(false);
    expect(save.disabled).toBe(false);

    for (const state of ["flagged", "retransfer"]) {
      fireEvent.change(within(form).getByLabelText("New review state"), { target: { value: state } });
      expect(reason.required).toBe(true);
      expect(save.disabled).toBe(true);
      fireEvent.change(reason, { target: { value: "   " } });
      expect(save.disabled).toBe(true);
      fireEvent.change(reason, { target: { value: "" } });
    }
    fireEvent.change(within(form).getByLabelText("New review state"), { target: { value: "accepted" } });
    fireEvent.click(save);
    await waitFor(() => expect(stub.requests("PATCH", "/api/files/7")).toHaveLength(1));
    expect(stub.requests("PATCH", "/api/files/7")[0].body).toEqual({ reviewState: "accepted", reason: "" });
  });
});

describe("previous and next file", () => {
  it("walks the list the reviewer came from, keeping its filters and sort, across page edges", async () => {
    const stub = stubFetch()
      .on("GET", "/api/session", { body: { user: user("supervisor") } })
      .on("GET", /^\/api\/files\/\d+$/, (req) => ({ body: reviewDetail({ ...fileSummary(Number(req.url.pathname.split("/").pop())), levelGridUrl: null, loudnessCurveUrl: null }) }))
      .on("GET", "/api/files", (req) =>
        req.url.searchParams.get("page") === "2"
          ? { body: filePage([fileSummary(9), fileSummary(4)], 27, 2, 25) }
          : { body: filePage([fileSummary(6), fileSummary(7)], 27, 1, 25) },
      );
    const { router } = renderApp("/files/7?batch=3&verdict=fail&sort=path&order=asc&pageSize=25");
    await screen.findByRole("heading", { name: "ferry/interview-07.wav" });
    const listQuery = Object.fromEntries(stub.requests("GET", "/api/files")[0].url.searchParams);
    expect(listQuery).toMatchObject({ batch: "3", verdict: "fail", sort: "path", order: "asc", page: "1", pageSize: "25" });

    const previous = await screen.findByRole("link", { name: /Previous file/ });
    expect(previous.getAttribute("href")).toBe("/files/6?batch=3&verdict=fail&sort=path&order=asc&pageSize=25");
    // 7 is the last row of page 1, so the next file is the first of page 2.
    const next = await screen.findByRole("link", { name: /Next file/ });
    // Page 2 is asked for by page 1's cursor (a seek on the server), and the file page keeps it in its address.
    expect(next.getAttribute("href")).toBe("/files/9?batch=3&verdict=fail&sort=path&order=asc&page=2&after=after-page-1&pageSize=25");
    expect(stub.requests("GET", "/api/files").find((r) => r.url.searchParams.get("page") === "2")?.url.searchParams.get("after")).toBe("after-page-1");
    expect(screen.getByText("2 of 27 in the list")).toBeTruthy();
    expect(within(screen.getByRole("navigation", { name: "Breadcrumb" })).getByRole("link", { name: "Files" }).getAttribute("href")).toBe("/files?batch=3&verdict=fail&sort=path&order=asc&pageSize=25");

    fireEvent.keyDown(document.body, { key: "]" });
    await waitFor(() => expect(router.state.location.pathname).toBe("/files/9"));
    expect(router.state.location.search).toBe("?batch=3&verdict=fail&sort=path&order=asc&page=2&after=after-page-1&pageSize=25");
    await screen.findByRole("heading", { name: "ferry/interview-09.wav" });
    fireEvent.keyDown(document.body, { key: "[" });
    await waitFor(() => expect(router.state.location.pathname).toBe("/files/7"));
    expect(router.state.location.search).toBe("?batch=3&verdict=fail&sort=path&order=asc&pageSize=25");
  });

  it("opens a file from the Files table with the table's query in its address", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("auditor") } })
      .on("GET", "/api/files", { body: filePage([fileSummary(7)]) });
    renderApp("/files?batch=3&finding=clipping");
    const link = await screen.findByRole("link", { name: "ferry/interview-07.wav" });
    expect(link.getAttribute("href")).toBe("/files/7?batch=3&finding=clipping");
  });
});

describe("comments anchored to a time", () => {
  const anchored: CommentDto = {
    id: 90,
    author: { id: 1, email: "supervisor@harbourside.test", name: "Supervisor Demo" },
    body: "Click on the right channel here.",
    createdAt: "2026-11-21T08:00:00.000Z",
    atSeconds: 31.5,
    channel: 1,
  };

  it("links an anchored comment to the close-up and puts the playhead and solo there", async () => {
    vi.stubGlobal(
      "AudioContext",
      class {
        state = "running";
        destination = {};
        createMediaElementSource = () => ({ connect() {}, disconnect() {} });
        createChannelSplitter = () => ({ connect() {}, disconnect() {} });
        createChannelMerger = () => ({ connect() {}, disconnect() {} });
        createGain = () => ({ connect() {}, disconnect() {}, gain: { value: 1 } });
        close = () => Promise.resolve();
      },
    );
    serve("auditor", reviewDetail({ comments: [anchored, { ...anchored, id: 91, body: "Hiss here", atSeconds: 100, channel: null }] }));
    await openPage();
    // 100 s lies in no close-up's window: the time is shown, but not as a link.
    expect(screen.getByText("at 1:40.00 (no close-up covers this moment)")).toBeTruthy();
    const link = screen.getByRole("button", { name: "Go to 0:31.50, channel 2 in the close-up" });
    fireEvent.click(link);
    const img = await screen.findByAltText(/^Close-up spectrogram of/);
    loadImage(img, 1600, 600);
    const audio = document.querySelector("audio[data-excerpt]") as HTMLAudioElement;
    await waitFor(() => expect(audio.currentTime).toBeCloseTo(3.5, 6)); // 31.5 s − the window's 28 s
    expect((screen.getByRole("combobox", { name: /Channel/ }) as HTMLSelectElement).value).toBe("1");
    expect(parseFloat((document.querySelector("[data-playhead]") as HTMLElement).style.left)).toBeCloseTo((3.5 / 4.5) * 100, 3);
  });

  it("posts a comment at the playhead with the soloed channel", async () => {
    const stub = serve("technician").on("POST", "/api/files/7/comments", (req) => ({ status: 201, body: { ...anchored, ...(req.body as object) } }));
    await openPage();
    const audio = await openCloseup();
    act(() => {
      audio.currentTime = 1.5;
      audio.dispatchEvent(new Event("timeupdate"));
    });
    const box = screen.getByRole("checkbox", { name: /Comment at playhead \(0:29.50\)/ }) as HTMLInputElement;
    expect(box.checked).toBe(true);
    fireEvent.change(screen.getByLabelText("Add a comment"), { target: { value: "Crackle starts here" } });
    fireEvent.click(screen.getByRole("button", { name: "Post comment" }));
    await waitFor(() => expect(stub.requests("POST", "/api/files/7/comments")).toHaveLength(1));
    expect(stub.requests("POST", "/api/files/7/comments")[0].body).toEqual({ body: "Crackle starts here", atSeconds: 29.5, channel: null });

    // Unticked, the next comment is not anchored.
    fireEvent.click(box);
    fireEvent.change(screen.getByLabelText("Add a comment"), { target: { value: "General note" } });
    fireEvent.click(screen.getByRole("button", { name: "Post comment" }));
    await waitFor(() => expect(stub.requests("POST", "/api/files/7/comments")).toHaveLength(2));
    expect(stub.requests("POST", "/api/files/7/comments")[1].body).toEqual({ body: "General note" });
  });
});

describe("loudness curve", () => {
  it("refuses a curve whose series differ in length and gives no band without a profile target", () => {
    const good = loudnessCurveJson();
    expect(() => decodeLoudnessCurve({ ...good, shortTermLufs: good.shortTermLufs.slice(1) })).toThrow(/same length/);
    expect(() => decodeLoudnessCurve({ ...good, schema: "tidemark.loudness-curve/9" })).toThrow(/tidemark.loudness-curve\/1/);
    expect(loudnessBand(null)).toBeNull();
    expect(loudnessBand({ integratedLufs: null, truePeakMaxDbtp: -1 })).toBeNull();
    expect(loudnessBand({ integratedLufs: { target: -16, warnToleranceLu: 1, failToleranceLu: 3 }, truePeakMaxDbtp: null })).toEqual({
      target: -16,
      warnLow: -17,
      warnHigh: -15,
      failLow: -19,
      failHigh: -13,
    });
    // Without a band the chart gets just time, momentary and short-term.
    expect(curveChartData(decodeLoudnessCurve(good), null)).toHaveLength(3);
  });

  it("hands the chart the momentary and short-term series with the profile's band and the findings", async () => {
    charts.splice(0);
    serve("auditor");
    await openPage();
    await waitFor(() => expect(charts.filter((c) => !c.destroyed)).toHaveLength(1));
    const chart = charts.find((c) => !c.destroyed)!;
    expect(chart.options.series.map((s) => s.label)).toEqual(["Time", "Momentary", "Short-term", "Upper warn edge", "Lower warn edge"]);
    expect(chart.options.bands).toEqual([{ series: [3, 4], fill: expect.any(String) }]);
    expect(chart.data[0]).toHaveLength(1200);
    expect(chart.data[0][300]).toBeCloseTo(30, 6); // point i starts at i × 0.1 s (contract §3)
    expect(chart.data[1][300]).toBe(-9.1);
    expect(chart.data[2][0]).toBeNull(); // no short-term value in the first 3 s stays a gap
    expect(chart.data[3][0]).toBe(-22); // target −23 + 1 LU
    expect(chart.data[4][0]).toBe(-24);
    expect(screen.getByText(/^Shaded: the profile.s target \u221223.0 LUFS/)).toBeTruthy();
  });
});
