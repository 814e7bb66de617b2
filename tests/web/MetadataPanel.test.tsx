import { afterEach, describe, expect, it, vi } from "vitest";
import { render, screen, within } from "@testing-library/react";
import type { FileDetailDto } from "@tidemark/shared/types/api";
import { MetadataPanel } from "../../web/src/components/file/MetadataPanel.tsx";
import { stubFetch } from "./fetchStub.ts";
import { fileDetail, user } from "./fixtures.ts";
import { renderApp } from "./renderApp.tsx";

afterEach(() => vi.unstubAllGlobals());

// CodingHistory rows per EBU R 98; bext fields per EBU Tech 3285 v2; INFO ids per the RIFF specification (1991).
function withMetadata(): FileDetailDto {
  const base = fileDetail(7);
  return {
    ...base,
    metadata: {
      bext: {
        description: "Ferry Terminal Interviews 1978, reel 4 side A",
        originator: "Harbourside Sound Archive",
        originatorReference: "HSA-FTI-1978-004A",
        originationDate: "2024:03:18",
        originationTime: "14:02:55",
        timeReference: 0,
        version: 2,
        umid: "060a2b340101010501010d2013" + "00".repeat(19),
        codingHistory: "A=ANALOGUE,M=stereo,T=Studer A807; 7.5 ips\r\nA=PCM,F=96000,W=24,M=stereo,T=Harbourside ADC 2\r\n",
        loudness: { loudnessValue: -23.1, loudnessRange: 4.2, maxTruePeakLevel: -5.9, maxMomentaryLoudness: null, maxShortTermLoudness: -20.1 },
      },
      info: { IARL: "US, Harbourside Sound Archive", INAM: "Ferry Terminal Interviews" },
      ixml: "<BWFXML><PROJECT>Ferry</PROJECT></BWFXML>",
    },
    findings: [
      ...base.findings,
      { id: 901, code: "metadata-format", severity: "warn", channel: null, startSeconds: null, endSeconds: null, message: 'bext OriginationDate "2024:03:18" is not a date as yyyy-mm-dd (EBU Tech 3285)' },
    ],
  };
}

describe("MetadataPanel", () => {
  it("shows bext fields, loudness, the CodingHistory as a table, INFO by name and the iXML", () => {
    const { container } = render(<MetadataPanel file={withMetadata()} />);
    const bext = container.querySelector('dl[aria-label="bext fields"]') as HTMLElement;
    expect(within(bext).getByText("Originator reference").nextElementSibling?.textContent).toBe("HSA-FTI-1978-004A");
    expect(screen.getByText("-23.10 LUFS")).toBeTruthy();
    // 0x7FFF "not computed" reads as not set.
    expect(screen.getByText("not set")).toBeTruthy();
    expect(screen.getByText(/^32 bytes: 060a2b34/)).toBeTruthy();

    const table = screen.getByRole("table", { name: "Coding history" });
    const rows = within(table).getAllByRole("row").slice(1).map((r) => within(r).getAllByRole("cell").map((c) => c.textContent));
    expect(rows).toEqual([
      ["1", "ANALOGUE", "—", "—", "—", "stereo", "Studer A807; 7.5 ips"],
      ["2", "PCM", "96000 Hz", "—", "24 bit", "stereo", "Harbourside ADC 2"],
    ]);

    expect(screen.getByText("Archival location (IARL)")).toBeTruthy();
    expect(screen.getByText("Title (INAM)")).toBeTruthy();
    expect(screen.getByText(/<PROJECT>Ferry<\/PROJECT>/)).toBeTruthy();
    // The metadata finding is named in the panel; other findings are not.
    const listed = within(screen.getByRole("list", { name: "Metadata findings" })).getAllByRole("listitem");
    expect(listed.map((li) => li.textContent)).toEqual(['warn: bext OriginationDate "2024:03:18" is not a date as yyyy-mm-dd (EBU Tech 3285)']);
  });

  it("says so when a file carries no metadata", () => {
    render(<MetadataPanel file={{ ...fileDetail(7), metadata: {} }} />);
    expect(screen.getByText("This file carries no bext, INFO or iXML metadata.")).toBeTruthy();
    expect(screen.queryByRole("table", { name: "Coding history" })).toBeNull();
  });

  it("sits on the file page, and its finding is in the findings table too", async () => {
    stubFetch()
      .on("GET", "/api/session", { body: { user: user("auditor") } })
      .on("GET", "/api/files/7", { body: withMetadata() });
    renderApp("/files/7");
    const panel = await screen.findByRole("region", { name: "Embedded metadata" });
    expect(within(panel).getByText("Harbourside Sound Archive")).toBeTruthy();
    expect(within(screen.getByRole("region", { name: /Findings/ })).getAllByText(/OriginationDate "2024:03:18"/).length).toBeGreaterThan(0);
  });
});
