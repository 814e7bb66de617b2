/**
 * Runs the measurements of a scan on the worker pool, `workers` files at a time, in sorted order.
 * With a resume state, a file whose size and mtime match its record is hashed first and its earlier
 * result reused when the SHA-256 matches too; every newly finished file is appended to the state at once.
 */
import { appendFileSync } from "node:fs";
import { access } from "node:fs/promises";
import { availableParallelism } from "node:os";
import type { FileReport } from "@tidemark/shared/types/report";
import { oneLine } from "../errors.ts";
import type { ScanContext } from "./analyseFile.ts";
import { errorReport } from "./errorReport.ts";
import { fileKey } from "./rawPath.ts";
import { spectrogramPaths } from "./spectrogramPaths.ts";
import { useSpectralThread } from "./spectralThreadRule.ts";
import type { CrawledFile } from "./crawlFiles.ts";
import type { Interruption } from "./interruption.ts";
import type { ScanProgress } from "./progress.ts";
import type { ExpectedChecksum } from "@tidemark/shared/fixity/checksumFiles";
import type { ResumeRecord, ResumeState } from "./resumeState.ts";
import { createInlineRunner } from "./inlineRunner.ts";
import type { ScanTask, ScanTaskResult } from "./scanTask.ts";
import { createWorkerPool, WORKER_HEAP_LIMIT_MB, WorkerCrashError, WorkerStartError, type WorkerPool } from "./workerPool.ts";

export interface RunScanOptions {
  files: readonly CrawledFile[];
  workers: number;
  /**
   * Each long file's spectral side on a second thread: true (--spectral-thread) or false
   * (--no-spectral-thread); absent, when the cores allow (spectralThreadRule.ts).
   */
  spectralThread?: boolean;
  context: ScanContext;
  resume: ResumeState | null;
  progress: ScanProgress;
  interruption: Interruption;
  /** Checksum sidecars and --checksums lines, by absolute path, checked in each file's read. */
  expectedChecksums?: ReadonlyMap<string, ExpectedChecksum[]>;
}

export interface RunScanResult {
  /** Finished files (all of them unless interrupted). */
  reports: FileReport[];
  /** Files measured in this run (not taken from the resume state). */
  measured: number;
  reused: number;
  audioSeconds: number;
  interrupted: boolean;
}

/**
 * Per-worker young generation. V8's default (3 × 16 MB semi-spaces) let each worker hold ≈ 30 MB more
 * between scavenges: 2000 one-second files on 2 workers peaked at 290 MB, with 8 MB at ≈ 225 MB, and no
 * CPU time measurably lost on 1 s or 60 s files (issue #22's small-file scan must stay ≤ 300 MB).
 */
const WORKER_YOUNG_GENERATION_MB = 8;
/**
 * Files up to this size (≈ 29 s of 48 kHz/24-bit stereo) are sent ahead to a busy worker, up to
 * SMALL_FILES_PER_WORKER a worker, so it never waits for the main thread between them.
 */
const SMALL_FILE_BYTES = 8 * 1024 * 1024;
const SMALL_FILES_PER_WORKER = 3;
/** Running from the prebuilt bundle in cli/dist (cli/bin/build.mjs) rather than the TypeScript sources. */
const IS_BUNDLED = !import.meta.url.endsWith(".ts");
/** The worker script beside this module: the bundle's entry in dist, or the source next to this file. */
const WORKER_SCRIPT = new URL(IS_BUNDLED ? "./scanWorker.js" : "./scanWorker.ts", import.meta.url);

async function exists(file: string): Promise<boolean> {
  return access(file).then(
    () => true,
    () => false,
  );
}

/**
 * For the benchmark (scripts/bench.ts): when set, each measured file's stage times are appended to this
 * file as one JSON line. Not an option: it is a measuring aid, not part of the command's contract.
 */
const STAGE_TIMINGS_ENV = "TIDEMARK_STAGE_TIMINGS";

/** The earlier result may stand only if nothing it depends on has changed. */
async function reusable(record: ResumeRecord | undefined, file: CrawledFile, context: ScanContext): Promise<boolean> {
  if (!record || record.sizeBytes !== file.sizeBytes || record.mtimeMs !== file.mtimeMs) return false;
  if (record.report.sha256 === null) return false;
  // A record made without a fingerprint cannot stand in for a scan that wants one.
  if (context.fingerprint && record.report.fingerprint === undefined && record.report.error === null) return false;
  if (context.spectrograms) {
    if (!record.report.spectrogram) return false;
    // Close-ups asked for now but not then (or the other way round): measure again.
    if (context.closeups !== (record.report.closeups !== undefined) && record.report.error === null) return false;
    if (!(await exists(spectrogramPaths(context.spectrograms, file.relPath).png))) return false;
  }
  return true;
}

const isSmall = (file: CrawledFile): boolean => file.sizeBytes <= SMALL_FILE_BYTES;

export async function runScan(options: RunScanOptions): Promise<RunScanResult> {
  const { files, resume, progress, interruption } = options;
  // A spare core for every file measured at once, or asked for: each long file's spectral side gets a
  // thread of its own (spectralThreadClient.ts). With more files than that the pool keeps the cores busy.
  const split = useSpectralThread({ forced: options.spectralThread, workers: options.workers, files: files.length, cores: availableParallelism() });
  const context: ScanContext = { ...options.context, spectralThread: split };
  const reports: FileReport[] = [];
  let measured = 0;
  let reused = 0;
  let audioSeconds = 0;
  if (files.length === 0) return { reports, measured, reused, audioSeconds, interrupted: interruption.requested };

  const size = Math.min(options.workers, files.length);
  const pool: WorkerPool<ScanTask, ScanTaskResult> =
    size === 1
      ? createInlineRunner(context)
      : createWorkerPool({ size, script: WORKER_SCRIPT, workerData: context, maxOldGenerationSizeMb: WORKER_HEAP_LIMIT_MB, maxYoungGenerationSizeMb: WORKER_YOUNG_GENERATION_MB, queueDepth: SMALL_FILES_PER_WORKER });
  interruption.onImmediate(() => void pool.terminate());

  const measure = async (file: CrawledFile): Promise<{ report: FileReport; seconds: number } | null> => {
    try {
      // Sidecars are matched by path string; a name that is not UTF-8 has none.
      const expectedChecksums = typeof file.absPath === "string" ? options.expectedChecksums?.get(file.absPath) : undefined;
      const task = { kind: "analyse" as const, absPath: file.absPath, relPath: file.relPath, pathBytes: file.pathBytes, sizeBytes: file.sizeBytes, ...(expectedChecksums ? { expectedChecksums } : {}) };
      const result = await pool.run(task, (bytes) => progress.fileBytes(file.relPath, bytes), isSmall(file));
      if (result.kind !== "analysed") throw new Error(`expected a measurement, got ${result.kind}`);
      if (result.file.imageError) progress.note(`tidemark: warning: ${result.file.imageError}`);
      const timingsFile = process.env[STAGE_TIMINGS_ENV];
      if (timingsFile) {
        const line = { path: file.relPath, audioSeconds: result.file.audioSeconds, bundled: IS_BUNDLED, timingsMs: result.file.timingsMs };
        appendFileSync(timingsFile, `${JSON.stringify(line)}\n`);
      }
      return { report: result.file.report, seconds: result.file.audioSeconds };
    } catch (error) {
      // Stopped on purpose: the file is simply not done.
      if (interruption.immediate) return null;
      // Nothing can be measured: stop the scan rather than report every file as an error.
      if (error instanceof WorkerStartError) throw error;
      const code = error instanceof WorkerCrashError ? "worker-crashed" : "analysis-failed";
      const report = errorReport(file.relPath, file.sizeBytes, { code, message: `${file.relPath}: measurement stopped (${oneLine(error)})` });
      return { report: file.pathBytes ? { ...report, pathBytes: file.pathBytes } : report, seconds: 0 };
    }
  };

  const processFile = async (file: CrawledFile): Promise<void> => {
    progress.fileStarted(file.relPath);
    const record = resume?.records.get(fileKey(file));
    if (record && (await reusable(record, file, context))) {
      const hashed = await pool.run({ kind: "hash", absPath: file.absPath }).catch(() => null);
      if (hashed?.kind === "hashed" && hashed.sha256 === record.report.sha256) {
        reports.push(record.report);
        reused += 1;
        progress.fileDone(file.relPath, 0, file.sizeBytes);
        return;
      }
      if (interruption.immediate) return;
    }
    const done = await measure(file);
    if (!done) return;
    reports.push(done.report);
    measured += 1;
    audioSeconds += done.seconds;
    resume?.append({ kind: "file", relPath: file.relPath, ...(file.pathBytes ? { pathBytes: file.pathBytes } : {}), sizeBytes: file.sizeBytes, mtimeMs: file.mtimeMs, report: done.report });
    progress.fileDone(file.relPath, done.seconds, file.sizeBytes);
  };

  let next = 0;
  const lane = async (): Promise<void> => {
    while (!interruption.requested && next < files.length) await processFile(files[next++]);
  };
  // Lanes beyond one a worker only take small files (they wait in a worker); at a large one they end, so a
  // large file never queues behind another, and after Ctrl-C only a few small files more are finished.
  const extraLane = async (): Promise<void> => {
    while (!interruption.requested && next < files.length && isSmall(files[next])) await processFile(files[next++]);
  };
  const extraLanes = size === 1 ? 0 : pool.size * (SMALL_FILES_PER_WORKER - 1);
  try {
    await Promise.all([...Array.from({ length: pool.size }, lane), ...Array.from({ length: extraLanes }, extraLane)]);
  } finally {
    if (interruption.immediate) await pool.terminate();
    else await pool.close();
  }
  return { reports, measured, reused, audioSeconds, interrupted: interruption.requested };
}
