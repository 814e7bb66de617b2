/**
 * Finds the files a report points at, for upload, and names each part as ingest takes it (CONTRACT-16 §4):
 * per file n, `spectrogram` and `waveform` (`<n>.png`, the strip beside the spectrogram), `levelGrid` and
 * `loudnessCurve` (`<n>.json`), and per close-up k `closeupSpectrogram` / `closeupWaveform` (`<n>.<k>.png`)
 * and `excerpt` (`<n>.<k>.wav` or `.flac`). The HTTP side is ingestClient.ts.
 */
import { readFile } from "node:fs/promises";
import path from "node:path";
import type { FileReport, ScanReport } from "@tidemark/shared/types/report";
import { waveformPathFor } from "../scan/spectrogramPaths.ts";
import type { ImagePart, PartField } from "./ingestClient.ts";

async function readFirst(candidates: string[]): Promise<Uint8Array | null> {
  for (const file of candidates) {
    try {
      return await readFile(file);
    } catch {
      // Try the next base folder.
    }
  }
  return null;
}

interface WantedPart {
  field: PartField;
  shown: string;
  name: string;
  mediaType: string;
}

/** The parts one file of a report brings, with their names (`n` is its index in report.files). */
export function partsOfFile(file: FileReport, n: number | string): WantedPart[] {
  if (!file.spectrogram) return [];
  const parts: WantedPart[] = [
    { field: "spectrogram", shown: file.spectrogram, name: `${n}.png`, mediaType: "image/png" },
    { field: "waveform", shown: waveformPathFor(file.spectrogram), name: `${n}.png`, mediaType: "image/png" },
  ];
  if (file.levelGrid) parts.push({ field: "levelGrid", shown: file.levelGrid, name: `${n}.json`, mediaType: "application/json" });
  if (file.loudnessCurve) parts.push({ field: "loudnessCurve", shown: file.loudnessCurve, name: `${n}.json`, mediaType: "application/json" });
  for (const [k, c] of (file.closeups ?? []).entries()) {
    parts.push({ field: "closeupSpectrogram", shown: c.spectrogram, name: `${n}.${k}.png`, mediaType: "image/png" });
    parts.push({ field: "closeupWaveform", shown: c.waveform, name: `${n}.${k}.png`, mediaType: "image/png" });
    if (c.excerpt && c.excerptMediaType) {
      const ext = c.excerptMediaType === "audio/flac" ? "flac" : "wav";
      parts.push({ field: "excerpt", shown: c.excerpt, name: `${n}.${k}.${ext}`, mediaType: c.excerptMediaType });
    }
  }
  return parts;
}

/**
 * Reads the parts of every file that has a spectrogram. Relative paths are tried against each base
 * folder in turn (the scan's working folder, then the report's folder). Missing files are listed, not fatal.
 */
export async function collectReportImages(report: ScanReport, baseDirs: string[]): Promise<{ images: ImagePart[]; missing: string[] }> {
  const images: ImagePart[] = [];
  const missing: string[] = [];
  for (const [fileIndex, file] of report.files.entries()) {
    for (const part of partsOfFile(file, fileIndex)) {
      const candidates = path.isAbsolute(part.shown) ? [part.shown] : baseDirs.map((d) => path.resolve(d, part.shown));
      const bytes = await readFirst(candidates);
      if (bytes) images.push({ field: part.field, fileIndex, bytes, name: part.name, mediaType: part.mediaType });
      else missing.push(part.shown);
    }
  }
  return { images, missing };
}
