/** Issue #16: the batch page's at-a-glance strip from GET /api/batches/:id/overview (mocked). */
import { afterEach, describe, expect, it, vi } from "vitest";
import { fireEvent, screen, waitFor, within } from "@testing-library/react";
import { stubFetch } from "./fetchStub.ts";
import { filePage, batch, page, user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";
import { batchOverview } from "./reviewFixtures.ts";
import { charts } from "./uplotMock.ts";
import { findingBars, loudnessRanking, truePeakRanking } from "../../web/src/components/batches/batchOverview.ts";

afterEach(() => vi.unstubAllGlobals());

function serve() {
  return stubFetch()
    .on("GET", "/api/session", { body: { user: user("auditor") } })
    .on("GET", "/api/batches/3", { body: batch(3) })
    .on("GET", "/api/batches/3/overview", { body: batchOverview() })
    .on("GET", "/api/files", { body: filePage([]) });
}

describe("batch overview", () => {
  it("ranks files by loudness and true peak and counts those outside the profile's limits", () => {
    const overview = batchOverview();
    const loudness = loudnessRanking(overview);
    expect(loudness.values).toEqual([-26.1, -23.2, -18.4]);
    expect(loudness.ranks).toEqual([1, 2, 3]);
    // Target −23 ± 2 LU (fail tolerance): −26.1 and −18.4 are outside, −23.2 inside.
    expect(loudness.outside).toBe(2);
    expect(loudness.missing).toBe(1);
    const peaks = truePeakRanking(overview);
    expect(peaks.values).toEqual([-3, -1.5, 0.3]);
    expect(peaks.outside).toBe(1); // only 0.3 dBTP is above the −1 dBTP ceiling
    expect(truePeakRanking({ ...overview, profileLimits: null }).outside).toBe(0);
  });

  it("orders finding bars by severity and files and links each to the filtered file list", () => {
    const bars = findingBars(batchOverview());
    expect(bars.map((b) => [b.code, b.percent, b.href])).toEqual([
      ["clipping", 100, "/files?batch=3&finding=clipping"],
      ["hum", 50, "/files?batch=3&finding=hum"],
    ]);
  });

  it("shows the strip on the batch page, with bars that open the Files list filtered by batch and finding", async () => {
    charts.splice(0);
    const stub = serve();
    const { router } = renderApp("/batches/3");
    expect(await screen.findByRole("heading", { name: "Batch #3" })).toBeTruthy();
    const strip = await screen.findByRole("region", { name: "At a glance" });
    expect(within(strip).getByText("2 outside the limits ·")).toBeTruthy();
    expect(within(strip).getByText("1 outside the limits ·")).toBeTruthy();
    await waitFor(() => expect(charts.filter((c) => !c.destroyed)).toHaveLength(2));
    const live = charts.filter((c) => !c.destroyed);
    expect(live.map((c) => c.data[1])).toEqual([
      [-26.1, -23.2, -18.4],
      [-3, -1.5, 0.3],
    ]);

    // Hovering a dot names its file: the quietest is file 4, the highest true peak file 2.
    const nameAt = (chart: number, index: number) =>
      (live[chart].options.series[0] as unknown as { value: (u: unknown, v: unknown, s: number, i: number) => string }).value(null, null, 0, index);
    expect(nameAt(0, 0)).toBe("ferry/interview-04.wav");
    expect(nameAt(1, 2)).toBe("ferry/interview-02.wav");

    const clipping = within(strip).getByRole("link", { name: "clipping (fail): 2 files, 5 findings" });
    expect(clipping.getAttribute("href")).toBe("/files?batch=3&finding=clipping");
    fireEvent.click(clipping);
    await waitFor(() => expect(router.state.location.pathname).toBe("/files"));
    // The Files page honours finding= and asks the server for exactly that filter.
    await waitFor(() => expect(stub.requests("GET", "/api/files").length).toBeGreaterThan(0));
    expect(Object.fromEntries(stub.requests("GET", "/api/files")[0].url.searchParams)).toMatchObject({ batch: "3", finding: "clipping" });
  });

  it("links each batch of the list to its overview", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("auditor") } })
      .on("GET", "/api/collections", { body: [] })
      .on("GET", "/api/batches", { body: page([batch(3)], 1, 1, 25) });
    renderApp("/batches");
    expect((await screen.findByRole("link", { name: "Overview of batch #3" })).getAttribute("href")).toBe("/batches/3");
  });
});
