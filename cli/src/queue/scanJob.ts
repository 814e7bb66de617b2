/**
 * Measures one claimed job's file and packs what the server takes as its result: a one-file report
 * (the same contract as `scan --format json`) and the files beside it as multipart parts named exactly
 * as ingest takes a batch (`0.png`, `0.json`, `0.<k>.png`, `0.<k>.wav`; upload/reportImages.ts).
 */
import { readFile, rm, stat } from "node:fs/promises";
import path from "node:path";
import { profileLimits } from "@tidemark/shared/profiles/profileSettings";
import { assembleReport } from "@tidemark/shared/report/assembleReport";
import { reportToJson } from "@tidemark/shared/report/jsonReport";
import type { ClaimedJobDto } from "@tidemark/shared/types/api";
import type { ScanReport } from "@tidemark/shared/types/report";
import { fromBytes, resolveLossyPath, type FsPath } from "../scan/rawPath.ts";
import { channelSpectrogramPath, spectrogramPaths } from "../scan/spectrogramPaths.ts";
import type { PartField } from "../upload/ingestClient.ts";
import { partsOfFile } from "../upload/reportImages.ts";
import { toolInfo } from "../toolInfo.ts";
import type { ScanEngine } from "./scanEngines.ts";

export interface JobOutcome {
  report: ScanReport;
  images: { field: PartField; name: string; mediaType: string; bytes: Uint8Array }[];
  audioSeconds: number;
  /** A warning (PNGs not written); the measurements still stand. */
  imageError: string | null;
  /** Removes the PNGs once they are uploaded. */
  cleanUp(): Promise<void>;
}

/** The file is not on this machine's storage (or not a file): another worker, or a fixed mount, may do better. */
export class FileMissingError extends Error {}

/**
 * Where the job's file is here. A name that is not UTF-8 comes with its exact bytes (`pathBytes`): the local
 * root (the display path less the report path) joined with them. A job without them (from an older CLI) is
 * found by its display form (rawPath.ts) when exactly one file in its folder looks like it.
 */
export async function locate(job: Pick<ClaimedJobDto, "path" | "pathBytes">, localPath: string): Promise<FsPath> {
  if (job.pathBytes && localPath.endsWith(`/${job.path}`)) {
    const root = localPath.slice(0, localPath.length - job.path.length);
    return fromBytes(Buffer.concat([Buffer.from(root, "utf8"), Buffer.from(job.pathBytes, "base64")]));
  }
  if (!localPath.includes("\ufffd")) return localPath;
  const found = await resolveLossyPath(localPath);
  return found.length === 1 ? found[0] : localPath;
}

/** `progress` (optional) hears of the file's size once it is found, and of each read while it is measured. */
export interface JobProgress {
  started(path: string, sizeBytes: number): void;
  read(path: string, bytesRead: number): void;
}

export async function scanJob(job: ClaimedJobDto, localPath: string, engine: ScanEngine, progress?: JobProgress): Promise<JobOutcome> {
  const absPath = await locate(job, localPath);
  const found = await stat(absPath).catch((e: { code?: string }) => {
    throw new FileMissingError(`${localPath} is not reachable from this worker (${e.code ?? String(e)}): is the shared storage mounted here?`);
  });
  if (!found.isFile()) throw new FileMissingError(`${localPath} is not a regular file`);
  const startedAt = new Date().toISOString();
  progress?.started(job.path, found.size);
  const result = await engine.pool.run({ kind: "analyse", absPath, relPath: job.path, ...(job.pathBytes ? { pathBytes: job.pathBytes } : {}), sizeBytes: found.size }, (bytes) => progress?.read(job.path, bytes));
  if (result.kind !== "analysed") throw new Error(`expected a measurement, got ${result.kind}`);
  const { file } = result;
  const report = assembleReport(
    { tool: toolInfo(), profile: { name: engine.profile.profile.name, hash: engine.profile.hash, limits: profileLimits(engine.profile.profile) }, startedAt, finishedAt: new Date().toISOString() },
    [file.report],
  );

  const target = engine.context.spectrograms;
  const paths = target ? spectrogramPaths(target, job.path) : null;
  const images: JobOutcome["images"] = [];
  // The report shows paths under the target's dirShown; the files are under its dirAbs.
  const absOf = (shown: string): string => (target ? path.join(target.dirAbs, ...shown.slice(target.dirShown.length + 1).split("/")) : shown);
  const parts = paths && file.report.spectrogram && !file.imageError ? partsOfFile(file.report, 0) : [];
  for (const part of parts) images.push({ field: part.field, name: part.name, mediaType: part.mediaType, bytes: await readFile(absOf(part.shown)) });
  return {
    report,
    images,
    audioSeconds: file.audioSeconds,
    imageError: file.imageError,
    async cleanUp() {
      if (!paths) return;
      const channels = (file.report.format?.channels ?? 0) > 1 ? Array.from({ length: file.report.format!.channels }, (_, c) => channelSpectrogramPath(paths.png, c)) : [];
      const written = partsOfFile(file.report, 0).map((p) => absOf(p.shown));
      await Promise.all([...new Set([paths.png, paths.waveform, ...channels, ...written])].map((p) => rm(p, { force: true })));
    },
  };
}

export function resultForm(job: ClaimedJobDto, worker: string, outcome: JobOutcome): FormData {
  const form = new FormData();
  form.append("attempt", String(job.attempt));
  form.append("worker", worker);
  form.append("report", new Blob([reportToJson(outcome.report)], { type: "application/json" }), "report.json");
  for (const image of outcome.images) form.append(image.field, new Blob([image.bytes], { type: image.mediaType }), image.name);
  return form;
}
