/**
 * The parts a report brings to an upload (CONTRACT-16 §4) and their survival through the spool: names,
 * fields and media types, read from files a report points at.
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import type { FileReport, ScanReport } from "../../shared/src/types/report.ts";
import { collectReportImages } from "../../cli/src/upload/reportImages.ts";
import { loadSpooled, spoolBatch } from "../../cli/src/upload/spool.ts";

const dir = mkdtempSync(path.join(tmpdir(), "tidemark-parts-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function file(name: string, withCloseups: boolean): FileReport {
  const base = `png/${name}`;
  return {
    path: name,
    sizeBytes: 1,
    sha256: null,
    format: null,
    metadata: {},
    metrics: null,
    findings: [],
    verdict: "pass",
    error: null,
    spectrogram: `${base}.png`,
    ...(withCloseups
      ? {
          levelGrid: `${base}.levels.json`,
          loudnessCurve: `${base}.loudness.json`,
          closeups: [0, 1].map((k) => ({
            findings: [k],
            startSeconds: k,
            endSeconds: k + 4,
            secondsPerColumn: 0.01,
            spectrogram: `${base}.closeup-${k + 1}.png`,
            waveform: `${base}.closeup-${k + 1}.waveform.png`,
            excerpt: k === 0 ? `${base}.closeup-${k + 1}.wav` : null,
            excerptMediaType: k === 0 ? ("audio/wav" as const) : null,
            excerptSampleRateHz: k === 0 ? 48000 : null,
          })),
          closeupsOmitted: [],
        }
      : {}),
  };
}

describe("collectReportImages", () => {
  it("names every part by its file index and close-up index, and keeps an old report's PNG parts as they were", async () => {
    const report = { files: [file("a.wav", false), file("b.wav", true)] } as unknown as ScanReport;
    for (const f of report.files) {
      const paths = [f.spectrogram!, f.spectrogram!.replace(/\.png$/, ".waveform.png"), f.levelGrid, f.loudnessCurve, ...(f.closeups ?? []).flatMap((c) => [c.spectrogram, c.waveform, c.excerpt])];
      for (const p of paths) if (p) {
        mkdirSync(path.dirname(path.join(dir, p)), { recursive: true });
        writeFileSync(path.join(dir, p), p);
      }
    }
    const { images, missing } = await collectReportImages(report, [dir]);
    expect(missing).toEqual([]);
    expect(images.map((i) => [i.field, i.name, i.mediaType, Buffer.from(i.bytes).toString()])).toEqual([
      ["spectrogram", "0.png", "image/png", "png/a.wav.png"],
      ["waveform", "0.png", "image/png", "png/a.wav.waveform.png"],
      ["spectrogram", "1.png", "image/png", "png/b.wav.png"],
      ["waveform", "1.png", "image/png", "png/b.wav.waveform.png"],
      ["levelGrid", "1.json", "application/json", "png/b.wav.levels.json"],
      ["loudnessCurve", "1.json", "application/json", "png/b.wav.loudness.json"],
      ["closeupSpectrogram", "1.0.png", "image/png", "png/b.wav.closeup-1.png"],
      ["closeupWaveform", "1.0.png", "image/png", "png/b.wav.closeup-1.waveform.png"],
      ["excerpt", "1.0.wav", "audio/wav", "png/b.wav.closeup-1.wav"],
      ["closeupSpectrogram", "1.1.png", "image/png", "png/b.wav.closeup-2.png"],
      ["closeupWaveform", "1.1.png", "image/png", "png/b.wav.closeup-2.waveform.png"],
    ]);
  });

  it("lists a missing close-up file instead of failing", async () => {
    const report = { files: [file("c.wav", true)] } as unknown as ScanReport;
    const { missing } = await collectReportImages(report, [path.join(dir, "nowhere")]);
    expect(missing).toContain("png/c.wav.closeup-1.wav");
  });
});

describe("the spool", () => {
  it("keeps each part's field, name and media type through a spool round trip", async () => {
    const images = [
      { field: "spectrogram" as const, fileIndex: 0, bytes: new Uint8Array([1]) },
      { field: "excerpt" as const, fileIndex: 3, bytes: new Uint8Array([2, 3]), name: "3.1.wav", mediaType: "audio/wav" },
      { field: "closeupWaveform" as const, fileIndex: 3, bytes: new Uint8Array([4]), name: "3.1.png", mediaType: "image/png" },
    ];
    const spooled = await spoolBatch(path.join(dir, "spool"), "http://127.0.0.1:1", { reportJson: "{}", collection: "c", batchKey: "k", images });
    const back = await loadSpooled(spooled);
    expect(back.batch.images.map((i) => [i.field, i.fileIndex, i.name, i.mediaType, [...i.bytes]])).toEqual([
      ["spectrogram", 0, undefined, undefined, [1]],
      ["excerpt", 3, "3.1.wav", "audio/wav", [2, 3]],
      ["closeupWaveform", 3, "3.1.png", "image/png", [4]],
    ]);
  });
});
