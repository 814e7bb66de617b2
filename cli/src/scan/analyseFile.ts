/**
 * Measures one file: a single read that hashes and decodes (readAudioFile), both analysers fed from it,
 * the profile's judgement, and the PNGs when asked for. Never throws for a bad file: the report says
 * `error` with the reader's stable code and a one-line message instead.
 */
import { mkdir, writeFile } from "node:fs/promises";
import path from "node:path";
import { createFileAnalysis, createLevelSide, imagesOf, mergeFileAnalysis, type FileAnalysisResult, type LevelSideResult } from "@tidemark/shared/engine/fileAnalysis";
import { checksumFindings, compareChecksums, type ExpectedChecksum } from "@tidemark/shared/fixity/checksumFiles";
import { judge } from "@tidemark/shared/profiles/judge";
import type { Profile } from "@tidemark/shared/profiles/profileSchema";
import { renderSpectrogramImage } from "@tidemark/shared/render/spectrogramImage";
import { renderWaveformImage } from "@tidemark/shared/render/waveformImage";
import type { AudioBlock, BlockAnalyser, RgbaImage, StreamFormat } from "@tidemark/shared/types/analysis";
import { createKernelArena, type KernelArena } from "@tidemark/shared/wasm/kernelModule";
import type { AudioFormat, FileReport, Finding, ReportError } from "@tidemark/shared/types/report";
import type { AnalysisSettings } from "@tidemark/shared/types/settings";
import { readerFindings } from "@tidemark/shared/wav/readerFindings";
import { DEFAULT_BLOCK_FRAMES, readAudioFile, type AudioFileResult } from "../audio/readAudioFile.ts";
import { encodePngAsync } from "../render/encodePng.ts";
import { oneLine } from "../errors.ts";
import { errorReport } from "./errorReport.ts";
import { displayPath, type FsPath } from "./rawPath.ts";
import { channelSpectrogramPath, spectrogramPaths, type SpectrogramTarget } from "./spectrogramPaths.ts";
import { BlockRingError } from "./blockRing.ts";
import { readThreadClock } from "./threadClock.ts";
import { startSpectralThread, type SpectralThread } from "./spectralThreadClient.ts";
import type { SecondThreadPart } from "./spectralThread.ts";
import { rankerFor } from "./closeupRank.ts";
import { SPECTRAL_THREAD_MIN_SECONDS } from "./spectralThreadRule.ts";
import { writeCloseups, type CloseupFields } from "./writeCloseups.ts";

export interface ScanContext {
  profile: Profile;
  settings: AnalysisSettings;
  spectrograms: SpectrogramTarget | null;
  /** Compute the duplicate-detection fingerprint (the default; `scan --no-fingerprint` turns it off). */
  fingerprint: boolean;
  /** Close-ups, level grid and loudness curve beside the PNGs (the default; `scan --no-closeups` turns them off). */
  closeups: boolean;
  /**
   * Run each file's spectral side (spectrogram, bands, fingerprint) on a second thread
   * (spectralThreadClient.ts): set by runScan when the scan has a spare core for it
   * (spectralThreadRule.ts). Same results.
   */
  spectralThread?: boolean;
  /** Shortest file that gets the second thread (default SPECTRAL_THREAD_MIN_SECONDS; tests lower it). */
  spectralThreadMinSeconds?: number;
}

export { SPECTRAL_THREAD_MIN_SECONDS };

export interface AnalyseTask {
  /** A Buffer for a name that is not valid UTF-8 (rawPath.ts). */
  absPath: FsPath;
  /** As shown (U+FFFD for bytes that are not UTF-8). */
  relPath: string;
  /** Exact bytes of relPath, base64, when it is not valid UTF-8; copied into the report. */
  pathBytes?: string;
  /** Size seen by the crawl, reported when the file cannot be opened at all. */
  sizeBytes: number;
  /** Checksum sidecars and --checksums lines for this file, checked in the same read. */
  expectedChecksums?: ExpectedChecksum[];
}

export interface AnalysedFile {
  report: FileReport;
  audioSeconds: number;
  /** Set when the PNGs could not be written (the measurements still stand). */
  imageError: string | null;
  /**
   * Stage times: waiting for reads, decoding, hashing, the analysers (level, spectral and the fingerprint
   * within analyse),
   * and the images (painting and PNG encoding within render, which also counts writing them).
   */
  timingsMs: AnalyseTimings;
}

export interface AnalyseTimings {
  read: number;
  decode: number;
  hash: number;
  analyse: number;
  level: number;
  spectral: number;
  fingerprint: number;
  /** Keeping samples for close-ups and the loudness curve, within analyse. */
  closeups: number;
  render: number;
  paint: number;
  /** Wall time from the first PNG handed to the thread pool until the last one deflated (they overlap one another and the painting). */
  png: number;
  /** Time on a core of the thread that measured the file (opening to the images), and of its spectral thread (0 without one). */
  threadCpu: number;
  spectralThreadCpu: number;
  /** 1 when the file's spectral side ran on a second thread, else 0 (a count, not a time). */
  spectralThreads: number;
  /** 1 when that thread measured the level side too (FLAC: this thread only read and decoded), else 0. */
  secondThreadAll: number;
  /** Time the measuring thread waited for a core meanwhile (others' load); NaN where the system does not say. */
  runQueue: number;
}

/** Height of the overview waveform strip, px (its width follows the spectrogram's). */
export const WAVEFORM_HEIGHT_PX = 120;

/** Stable code of a reader error (AudioFileError / WavFormatError), or a generic one for anything else. */
function reportErrorOf(error: unknown, task: AnalyseTask, fallbackCode: string): ReportError {
  const code = (error as { code?: unknown } | null)?.code;
  const isTyped = typeof code === "string" && /^[a-z][a-z0-9-]*$/.test(code);
  // Messages name the file as the report does (relative), not by its absolute path.
  const message = oneLine(error).split(displayPath(task.absPath)).join(task.relPath);
  return { code: isTyped ? code : fallbackCode, message: isTyped || message.startsWith(task.relPath) ? message : `${task.relPath}: ${message}` };
}

async function writeImages(
  analysed: FileAnalysisResult,
  findings: Finding[],
  format: AudioFormat,
  target: SpectrogramTarget,
  task: AnalyseTask,
  ctx: ScanContext,
  timings: AnalyseTimings,
): Promise<{ spectrogram: string; closeups: CloseupFields | null }> {
  const settings = ctx.settings;
  const paths = spectrogramPaths(target, task.relPath);
  // Loaded on the first image only: Skia and fontkit cost a scan without images nothing.
  (await import("../render/fontTypesetter.ts")).installFontTypesetter();
  const { width, height } = settings.spectrogram;
  const markers = findings.filter((f) => f.startSeconds !== null && f.severity !== "info");
  // Every PNG (overview and close-ups) is deflated on the thread pool and written while this thread draws
  // on (their bytes as encodePng's); every write is waited for before the file counts as done.
  const writing: Promise<void>[] = [];
  let firstPng = NaN;
  const writePng = (file: string, paint: () => RgbaImage): Promise<void> => {
    const t0 = performance.now();
    const image = paint();
    const t1 = performance.now();
    timings.paint += t1 - t0;
    if (Number.isNaN(firstPng)) firstPng = t1;
    const written = encodePngAsync(image).then((bytes) => {
      timings.png = performance.now() - firstPng;
      return writeFile(file, bytes);
    });
    // Handled here too: a write that fails while this thread still draws must not count as unhandled.
    written.catch(() => undefined);
    writing.push(written);
    return written;
  };
  const write = (file: string, bytes: string | Uint8Array): Promise<void> => {
    const written = writeFile(file, bytes);
    written.catch(() => undefined);
    writing.push(written);
    return written;
  };
  await mkdir(path.dirname(paths.png), { recursive: true });
  const channelTitle = (c: number): string => `${task.relPath} (channel ${c + 1})`;
  const channelPath = (c: number): string => channelSpectrogramPath(paths.png, c);
  const grids = imagesOf(analysed);
  let closeups: CloseupFields | null;
  try {
    // The largest PNG first: its deflating on the pool overlaps everything drawn after it (issue #22).
    writePng(paths.png, () => renderSpectrogramImage(grids.spectrogram, { width, height, markers, title: task.relPath }));
    writePng(paths.waveform, () => renderWaveformImage(grids.waveform, { width, height: WAVEFORM_HEIGHT_PX, markers }));
    closeups = ctx.closeups
      ? await writeCloseups({ analysed, findings, format, target, relPath: task.relPath, settings, waveformHeightPx: WAVEFORM_HEIGHT_PX, writePng, write })
      : null;
    for (const [c, grid] of (grids.channelSpectrograms ?? []).entries()) {
      writePng(channelPath(c), () => renderSpectrogramImage(grid, { width, height, markers, title: channelTitle(c) }));
    }
  } catch (error) {
    // The writes already started are let finish (or fail) before the file counts as done.
    await Promise.allSettled(writing);
    throw error;
  }
  await Promise.all(writing);
  return { spectrogram: paths.shown, closeups };
}

/**
 * `signal` stops the read mid-file; an aborted file rejects instead of being reported as unreadable.
 * The analysers' WebAssembly instances are made in a kernel arena and handed back for the next file once
 * this one is done (issue #22; kernelModule.ts): nothing returned refers to them.
 */
export async function analyseFile(
  task: AnalyseTask,
  ctx: ScanContext,
  signal?: AbortSignal,
  onRead?: (bytesRead: number) => void,
): Promise<AnalysedFile> {
  const arena = createKernelArena();
  try {
    return await analyseFileIn(arena, task, ctx, signal, onRead);
  } finally {
    arena.release();
  }
}

async function analyseFileIn(
  arena: KernelArena,
  task: AnalyseTask,
  ctx: ScanContext,
  signal?: AbortSignal,
  onRead?: (bytesRead: number) => void,
): Promise<AnalysedFile> {
  const timingsMs: AnalyseTimings = { read: 0, decode: 0, hash: 0, analyse: 0, level: 0, spectral: 0, fingerprint: 0, closeups: 0, render: 0, paint: 0, png: 0, threadCpu: 0, spectralThreadCpu: 0, runQueue: 0, spectralThreads: 0, secondThreadAll: 0 };
  const clockAtStart = readThreadClock();
  let analysis: BlockAnalyser<FileAnalysisResult> | null = null;
  // With a second thread: the level side here (null when that thread measures everything) and the thread.
  let split: { level: BlockAnalyser<LevelSideResult> | null; spectral: SpectralThread } | null = null;
  let analyseMs = 0;
  // The audio stream opened: whatever fails after this is the analysis, not the file (an analyser that
  // refuses its settings fails alike with the spectral side in this thread or another).
  let opened = false;
  let read: AudioFileResult;
  try {
    read = await readAudioFile(task.absPath, {
      signal,
      onRead,
      digests: extraDigestsFor(task.expectedChecksums),
      onOpen: (info) => arena.run(() => {
        opened = true;
        // Close-ups are drawn beside the PNGs, so without them there is nothing to keep samples for.
        const wantsCloseups = ctx.closeups && ctx.spectrograms !== null;
        const options = {
          clock: () => performance.now(),
          fingerprint: ctx.fingerprint,
          closeups: wantsCloseups ? { rankOf: rankerFor(ctx.profile.severities) } : null,
          // The spectrogram grid and waveform envelope only feed the images: a scan without them skips both.
          images: ctx.spectrograms !== null,
        };
        const long = info.stream.totalFrames >= (ctx.spectralThreadMinSeconds ?? SPECTRAL_THREAD_MIN_SECONDS) * info.stream.sampleRateHz;
        if (ctx.spectralThread && long) {
          // FLAC's decoding takes this thread about as long as either side of the analysis: the other thread
          // then measures everything, which balances the two best. PCM costs next to nothing to decode.
          const all = info.format.container === "flac";
          // The level side first: if it cannot be set up, no thread is left waiting on the ring. A thread that
          // cannot start (the system's limit) leaves the file to this one: same results.
          const level = all ? null : createLevelSide(info.stream, ctx.settings, options);
          const part: SecondThreadPart = all ? { kind: "all", closeups: wantsCloseups ? { severities: ctx.profile.severities } : null } : { kind: "spectral" };
          const spectral = startSpectralThreadOrNull(info.stream, ctx.settings, { fingerprint: ctx.fingerprint, images: options.images }, part);
          if (spectral) {
            split = { level, spectral };
            return (block) => {
              const t = performance.now();
              // Into the ring first, so the other thread works on this block while this one measures levels.
              spectral.push(block);
              if (level) arena.run(() => level.push(block));
              analyseMs += performance.now() - t;
            };
          }
        }
        const a = createFileAnalysis(info.stream, ctx.settings, options);
        analysis = a;
        const push = (block: AudioBlock): void => a.push(block);
        return (block) => {
          const t = performance.now();
          arena.run(() => push(block));
          analyseMs += performance.now() - t;
        };
      }),
    });
  } catch (caught) {
    let error = caught;
    const pair = split as { spectral: SpectralThread } | null;
    if (pair && caught instanceof BlockRingError) {
      // The other thread failed: its own error says what went wrong, as it would have in one thread.
      error = await pair.spectral.failure(5000);
    }
    pair?.spectral.abort();
    if (signal?.aborted) throw error;
    const code = opened ? "analysis-failed" : "unreadable";
    return { report: withPathBytes(errorReport(task.relPath, task.sizeBytes, reportErrorOf(error, task, code)), task), audioSeconds: 0, imageError: null, timingsMs };
  }
  timingsMs.read = read.timings.readMs;
  timingsMs.decode = read.timings.decodeMs;
  timingsMs.hash = read.timings.hashMs;

  const two = split as { level: BlockAnalyser<LevelSideResult> | null; spectral: SpectralThread } | null;
  let analysed: FileAnalysisResult;
  try {
    const t = performance.now();
    if (two) {
      // The other thread finishes its part while this one finishes the level side (if it has it).
      const otherPart = two.spectral.finish();
      let levelSide: LevelSideResult | null;
      try {
        levelSide = arena.run(() => two.level?.finish() ?? null);
      } catch (error) {
        otherPart.catch(() => undefined);
        two.spectral.abort();
        throw error;
      }
      const other = await otherPart;
      timingsMs.spectralThreadCpu = other.threadCpuMs;
      timingsMs.spectralThreads = 1;
      timingsMs.secondThreadAll = other.kind === "all" ? 1 : 0;
      if (other.kind === "all") analysed = other.result;
      else if (levelSide) analysed = mergeFileAnalysis(levelSide, other.result);
      else throw new Error("second thread: measured the spectral side only, but no level side was kept here");
    } else {
      const one = analysis as BlockAnalyser<FileAnalysisResult> | null;
      analysed = (one ? arena.run(() => one.finish()) : null) ?? failNoAnalysis();
    }
    analyseMs += performance.now() - t;
  } catch (error) {
    two?.spectral.abort();
    return { report: withPathBytes(errorReport(task.relPath, read.sizeBytes, reportErrorOf(error, task, "analysis-failed")), task), audioSeconds: 0, imageError: null, timingsMs };
  }
  timingsMs.analyse = analyseMs;
  timingsMs.level = analysed.timings.level;
  timingsMs.spectral = analysed.timings.spectral;
  timingsMs.fingerprint = analysed.timings.fingerprint;
  timingsMs.closeups = analysed.timings.closeups;

  const { format, metadata, layout } = read.info;
  const checksums = task.expectedChecksums?.length ? compareChecksums(task.expectedChecksums, new Map([...read.digests, ["sha256", read.sha256]])) : undefined;
  const findings = [...analysed.findings, ...readerFindings(layout, read), ...checksumFindings(checksums ?? []), ...read.integrityFindings];
  const judged = judge(ctx.profile, { format, metrics: analysed.metrics, findings, error: null, metadata });

  let spectrogram: string | null = null;
  let closeups: CloseupFields | null = null;
  let imageError: string | null = null;
  if (ctx.spectrograms) {
    const t = performance.now();
    try {
      ({ spectrogram, closeups } = await writeImages(analysed, judged.findings, format, ctx.spectrograms, task, ctx, timingsMs));
    } catch (error) {
      imageError = `${task.relPath}: spectrogram not written (${oneLine(error)})`;
    }
    timingsMs.render = performance.now() - t;
  }
  const clockAtEnd = readThreadClock();
  timingsMs.threadCpu = clockAtEnd.cpuMs - clockAtStart.cpuMs;
  timingsMs.runQueue = clockAtEnd.runQueueMs - clockAtStart.runQueueMs;

  return {
    report: {
      path: task.relPath,
      ...(task.pathBytes ? { pathBytes: task.pathBytes } : {}),
      sizeBytes: read.sizeBytes,
      sha256: read.sha256,
      format,
      metadata,
      metrics: analysed.metrics,
      findings: judged.findings,
      verdict: judged.verdict,
      error: null,
      spectrogram,
      // Absent, not null, when --no-fingerprint asked for none: null means the rate is out of range.
      ...(ctx.fingerprint ? { fingerprint: analysed.fingerprint } : {}),
      ...(checksums ? { checksums } : {}),
      ...(closeups ?? {}),
    },
    audioSeconds: format.durationSeconds,
    imageError,
    timingsMs,
  };
}

function startSpectralThreadOrNull(format: StreamFormat, settings: AnalysisSettings, o: { fingerprint: boolean; images: boolean }, part: SecondThreadPart): SpectralThread | null {
  try {
    return startSpectralThread(format, settings, { ...o, slotFrames: DEFAULT_BLOCK_FRAMES, part });
  } catch {
    return null;
  }
}

/** The digests to compute beside SHA-256 (which the reader always computes). */
function extraDigestsFor(expected: readonly ExpectedChecksum[] | undefined): ("md5" | "sha1" | "sha512")[] {
  const out = new Set<"md5" | "sha1" | "sha512">();
  for (const e of expected ?? []) if (e.algorithm !== "sha256") out.add(e.algorithm);
  return [...out];
}

function withPathBytes(report: FileReport, task: AnalyseTask): FileReport {
  return task.pathBytes ? { ...report, pathBytes: task.pathBytes } : report;
}

function failNoAnalysis(): never {
  throw new Error("the reader finished without opening the audio stream");
}
