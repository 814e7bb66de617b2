/**
 * Finds the files a report points at, for upload, and names each part as ingest takes it
 * (shared/src/contracts/uploadParts.ts). The HTTP side is ingestClient.ts.
 */
import { readFile } from "node:fs/promises";
import path from "node:path";
import { PART_MEDIA_TYPES, partName } from "@tidemark/shared/contracts/uploadParts";
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
    { field: "spectrogram", shown: file.spectrogram, name: partName("spectrogram", n), mediaType: PART_MEDIA_TYPES.spectrogram },
    { field: "waveform", shown: waveformPathFor(file.spectrogram), name: partName("waveform", n), mediaType: PART_MEDIA_TYPES.waveform },
  ];
  if (file.levelGrid) parts.push({ field: "levelGrid", shown: file.levelGrid, name: partName("levelGrid", n), mediaType: PART_MEDIA_TYPES.levelGrid });
  if (file.loudnessCurve) parts.push({ field: "loudnessCurve", shown: file.loudnessCurve, name: partName("loudnessCurve", n), mediaType: PART_MEDIA_TYPES.loudnessCurve });
  for (const [k, c] of (file.closeups ?? []).entries()) {
    parts.push({ field: "closeupSpectrogram", shown: c.spectrogram, name: partName("closeupSpectrogram", n, { k }), mediaType: PART_MEDIA_TYPES.closeupSpectrogram });
    parts.push({ field: "closeupWaveform", shown: c.waveform, name: partName("closeupWaveform", n, { k }), mediaType: PART_MEDIA_TYPES.closeupWaveform });
    if (c.excerpt && c.excerptMediaType) {
      parts.push({ field: "excerpt", shown: c.excerpt, name: partName("excerpt", n, { k, excerptMediaType: c.excerptMediaType }), mediaType: c.excerptMediaType });
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
