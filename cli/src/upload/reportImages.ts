/** Finds the PNGs a report points at (each spectrogram and the waveform strip beside it) for upload. */
import { readFile } from "node:fs/promises";
import path from "node:path";
import type { ScanReport } from "@tidemark/shared/types/report";
import type { ImagePart } from "./ingestClient.ts";

export function waveformPathFor(spectrogramPath: string): string {
  return spectrogramPath.replace(/\.png$/i, ".waveform.png");
}

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

/**
 * Reads the images of every file that has a spectrogram. Relative paths are tried against each base
 * folder in turn (the scan's working folder, then the report's folder). Missing images are listed, not fatal.
 */
export async function collectReportImages(report: ScanReport, baseDirs: string[]): Promise<{ images: ImagePart[]; missing: string[] }> {
  const images: ImagePart[] = [];
  const missing: string[] = [];
  for (const [fileIndex, file] of report.files.entries()) {
    if (!file.spectrogram) continue;
    for (const [field, shown] of [["spectrogram", file.spectrogram], ["waveform", waveformPathFor(file.spectrogram)]] as const) {
      const candidates = path.isAbsolute(shown) ? [shown] : baseDirs.map((d) => path.resolve(d, shown));
      const bytes = await readFirst(candidates);
      if (bytes) images.push({ field, fileIndex, bytes });
      else missing.push(shown);
    }
  }
  return { images, missing };
}
