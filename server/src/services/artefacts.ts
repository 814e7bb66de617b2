/**
 * Uploaded artefacts → object store → the keys a file_results row records. Shared by the batch upload
 * and a worker's one-file result: both write every part under one fresh upload folder before their
 * transaction, and delete what they wrote if it does not commit (the orphan sweep catches a crash).
 */
import { readFile } from "node:fs/promises";
import { EXCERPT_EXTENSIONS, PART_MEDIA_TYPES } from "@tidemark/shared/contracts/uploadParts";
import type { FileReport } from "@tidemark/shared/types/report";
import type { AppContext } from "../context.ts";
import type { StoredCloseup, StoredCloseupOmitted } from "../models/FileResult.ts";
import { closeupKey, fileDataKey, imageKey } from "../storage/objectKeys.ts";
import type { ArtefactPart, PartKind } from "./ingestValidation.ts";

/** What one file row records about its uploaded artefacts. */
export interface FileArtefactLinks {
  spectrogramKey: string | null;
  waveformKey: string | null;
  levelGridKey: string | null;
  loudnessCurveKey: string | null;
  closeups: StoredCloseup[];
  closeupsOmitted: StoredCloseupOmitted[];
  /** Every key above except the overview PNGs (those have columns of their own). */
  artefactKeys: string[];
}


function keyFor(uploadId: string, fileIndex: number, part: ArtefactPart): string {
  switch (part.kind) {
    case "spectrogram":
    case "waveform":
      return imageKey(uploadId, fileIndex, part.kind);
    case "levelGrid":
      return fileDataKey(uploadId, fileIndex, "level-grid");
    case "loudnessCurve":
      return fileDataKey(uploadId, fileIndex, "loudness-curve");
    case "closeupSpectrogram":
      return closeupKey(uploadId, fileIndex, part.closeupIndex!, "spectrogram.png");
    case "closeupWaveform":
      return closeupKey(uploadId, fileIndex, part.closeupIndex!, "waveform.png");
    case "excerpt":
      return closeupKey(uploadId, fileIndex, part.closeupIndex!, `excerpt.${EXCERPT_EXTENSIONS[part.mediaType ?? "audio/wav"]}`);
  }
}

const slot = (kind: PartKind, closeupIndex: number | null): string => `${kind}:${closeupIndex ?? ""}`;

/** Stored keys by report file index, then by part (kind and close-up index); read with linksFor(). */
export type WrittenArtefacts = Map<number, Map<string, string>>;

/** Writes every part; `written` collects keys as they land so the caller can delete them on failure. */
export async function writeArtefacts(ctx: AppContext, uploadId: string, parts: ArtefactPart[], written: string[]): Promise<WrittenArtefacts> {
  const keys: WrittenArtefacts = new Map();
  for (const part of parts) {
    const key = keyFor(uploadId, part.fileIndex, part);
    const contentType = part.kind === "excerpt" ? part.mediaType! : PART_MEDIA_TYPES[part.kind];
    // From the upload's temporary file straight into the store where it can (no copy through memory).
    if (ctx.store.putFile) await ctx.store.putFile(key, part.path, contentType);
    else await ctx.store.put(key, await readFile(part.path), contentType);
    written.push(key);
    let ofFile = keys.get(part.fileIndex);
    if (!ofFile) keys.set(part.fileIndex, (ofFile = new Map()));
    ofFile.set(slot(part.kind, part.closeupIndex), key);
  }
  return keys;
}

/**
 * The row's links for report file `fileIndex`. A close-up is recorded only when both its PNGs arrived
 * (the CLI uploads what it finds and lists what it could not); its excerpt is optional.
 */
export function linksFor(file: FileReport, fileIndex: number, keys: WrittenArtefacts): FileArtefactLinks {
  const ofFile = keys.get(fileIndex) ?? new Map<string, string>();
  const get = (kind: PartKind, k: number | null = null): string | null => ofFile.get(slot(kind, k)) ?? null;
  const closeups: StoredCloseup[] = [];
  (file.closeups ?? []).forEach((c, index) => {
    const spectrogramKey = get("closeupSpectrogram", index);
    const waveformKey = get("closeupWaveform", index);
    if (!spectrogramKey || !waveformKey) return;
    const excerptKey = get("excerpt", index);
    closeups.push({
      index,
      findings: c.findings,
      startSeconds: c.startSeconds,
      endSeconds: c.endSeconds,
      secondsPerColumn: c.secondsPerColumn,
      spectrogramKey,
      waveformKey,
      excerptKey,
      excerptMediaType: excerptKey ? c.excerptMediaType : null,
      excerptSampleRateHz: excerptKey ? c.excerptSampleRateHz : null,
    });
  });
  const levelGridKey = get("levelGrid");
  const loudnessCurveKey = get("loudnessCurve");
  // Close-up PNGs and excerpts of a close-up left out above still belong to this row: listed, so deleted with it.
  const artefactKeys = [...ofFile.entries()].filter(([s]) => !s.startsWith("spectrogram:") && !s.startsWith("waveform:")).map(([, key]) => key);
  return {
    spectrogramKey: get("spectrogram"),
    waveformKey: get("waveform"),
    levelGridKey,
    loudnessCurveKey,
    closeups,
    closeupsOmitted: (file.closeupsOmitted ?? []).map((o) => ({ finding: o.finding, reason: o.reason })),
    artefactKeys,
  };
}

/** Deletes keys one by one; a failure is logged and left to the start-up sweep. */
export async function deleteObjects(ctx: AppContext, keys: string[]): Promise<void> {
  for (const key of keys) {
    await ctx.store.delete(key).catch((e: unknown) => ctx.logger.warn(`could not delete ${key} (the start-up sweep will): ${String(e)}`));
  }
}
