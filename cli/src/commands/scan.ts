/**
 * `tidemark scan`: crawl, measure on the worker pool, judge, report, and optionally upload.
 * Returns the exit code; nothing here exits the process.
 */
import { mkdir, mkdtemp, rename, rm, stat, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { profileLimits } from "@tidemark/shared/profiles/profileSettings";
import { assembleReport } from "@tidemark/shared/report/assembleReport";
import { reportToJson } from "@tidemark/shared/report/jsonReport";
import { reportWriters, type ReportFormat } from "@tidemark/shared/report/reportFormats";
import type { FileReport, ScanReport } from "@tidemark/shared/types/report";
import { resolveCredentials } from "../config/storedLogin.ts";
import { EXIT_CODES, loginAdvice, scanExitCode, UsageError } from "../errors.ts";
import type { CliIo } from "../io.ts";
import type { ScanOptions, UploadTarget } from "../options.ts";
import { loadProfile } from "../profiles/loadProfile.ts";
import type { ScanContext } from "../scan/analyseFile.ts";
import { errorReport } from "../scan/errorReport.ts";
import { fileKey } from "../scan/rawPath.ts";
import { assertBagTarget, bagNameOf, writeBag, type BagFile } from "../fixity/bag.ts";
import { expectedChecksums } from "../fixity/sidecars.ts";
import { crawlFiles, type CrawledFile } from "../scan/crawlFiles.ts";
import { junitSuitesOf } from "../scan/scanRoots.ts";
import { watchInterrupts } from "../scan/interruption.ts";
import { createScanProgress, progressDisplay } from "../scan/progress.ts";
import { openResumeState, type ResumeState } from "../scan/resumeState.ts";
import { runScan } from "../scan/runScan.ts";
import { toolInfo } from "../toolInfo.ts";
import { defaultBatchKey, deliverBatch, describeDelivered } from "../upload/deliverBatch.ts";
import { collectReportImages } from "../upload/reportImages.ts";

const FORMAT_BY_EXTENSION: Record<string, ReportFormat> = { ".json": "json", ".csv": "csv", ".xml": "junit", ".txt": "table" };

export function chooseFormat(options: Pick<ScanOptions, "format" | "out">, stdoutIsTty: boolean): ReportFormat {
  if (options.format) return options.format;
  if (options.out) return FORMAT_BY_EXTENSION[path.extname(options.out).toLowerCase()] ?? "json";
  return stdoutIsTty ? "table" : "json";
}

/** Fails before hours of measuring, not after, when the report could not be written. */
async function checkOutputFolder(out: string, cwd: string): Promise<string> {
  const abs = path.resolve(cwd, out);
  const dir = await stat(path.dirname(abs)).catch(() => null);
  if (!dir?.isDirectory()) throw new UsageError(`cannot write --out ${out}: folder ${path.dirname(out) || "."} does not exist`);
  const existing = await stat(abs).catch(() => null);
  if (existing?.isDirectory()) throw new UsageError(`cannot write --out ${out}: it is a folder`);
  return abs;
}

async function writeAtomically(file: string, text: string): Promise<void> {
  const temp = `${file}.${process.pid}.tmp`;
  await writeFile(temp, text);
  await rename(temp, file);
}

async function uploadReport(report: ScanReport, target: UploadTarget, defaultCollection: string, io: CliIo): Promise<number> {
  const log = (line: string): void => void io.stderr.write(`tidemark: ${line}\n`);
  const { server, token } = await resolveCredentials(target.server, io.env);
  const reportJson = reportToJson(report);
  const { images, missing } = await collectReportImages(report, [io.cwd]);
  for (const m of missing) log(`warning: image ${m} not found, not uploaded`);
  const batch = { reportJson, collection: target.collection ?? defaultCollection, batchKey: target.batchKey ?? defaultBatchKey(reportJson), images };
  const outcome = await deliverBatch(server, token, batch, { env: io.env, log, spoolWhenRejected: true });
  if (outcome.kind === "delivered") {
    log(describeDelivered(server, outcome.result));
    return EXIT_CODES.ok;
  }
  if (outcome.kind === "spooled") {
    log(`${outcome.reason}`);
    log(`not delivered: the batch is kept in ${outcome.dir}; send it later with: tidemark upload --spool`);
    return EXIT_CODES.notDelivered;
  }
  log(outcome.reason);
  if (outcome.error.status === 401) {
    log(`${server} refused the API token; ${loginAdvice(server)}`);
    if (outcome.spooledDir) log(`the batch is kept in ${outcome.spooledDir}; after logging in: tidemark upload --spool`);
    return EXIT_CODES.auth;
  }
  if (outcome.spooledDir) log(`the batch is kept aside in ${outcome.spooledDir} with the reason (not sent again)`);
  return EXIT_CODES.usage;
}

/** --bag: the readable files (their copies checked against the scan's SHA-256) and the JSON report as a tag file. */
async function writeScanBag(dir: string, given: string[], report: ScanReport, files: readonly CrawledFile[], io: CliIo): Promise<void> {
  const byPath = new Map(files.map((f) => [fileKey(f), f]));
  const bagged: BagFile[] = [];
  const names = new Set<string>();
  for (const f of report.files) {
    const crawled = byPath.get(fileKey(f));
    if (!f.sha256 || !crawled) {
      io.stderr.write(`tidemark: warning: ${f.path} is not in the bag: it could not be read\n`);
      continue;
    }
    // BagIt manifests are UTF-8 (RFC 8493 §2.1.3): a name that is not is copied under bagNameOf's name.
    const relPath = f.pathBytes ? bagNameOf(Buffer.from(f.pathBytes, "base64")) : f.path;
    if (names.has(relPath)) {
      io.stderr.write(`tidemark: warning: ${f.path} is not in the bag: its name in the bag, data/${relPath}, is another file's\n`);
      continue;
    }
    names.add(relPath);
    bagged.push({ absPath: crawled.absPath, relPath, sha256: f.sha256, ...(f.pathBytes ? { pathBytes: f.pathBytes } : {}) });
  }
  const written = await writeBag(path.resolve(io.cwd, dir), bagged, {
    info: [
      ["External-Description", `Transfers scanned by ${report.tool.name} ${report.tool.version} from ${given.join(", ")}, judged with profile ${report.profile.name}`],
      ["Internal-Sender-Description", "tidemark-report.json (a tag file) is the scan report of the payload"],
    ],
    tagFiles: [{ name: "tidemark-report.json", text: reportToJson(report) }],
  });
  io.stderr.write(`tidemark: wrote bag ${dir}: ${written.files} files, ${written.bytes} bytes (check it with: tidemark verify ${dir})\n`);
}

/** A file's report without the images drawn only for an upload (the close-up fields go with them). */
function withoutImages(file: FileReport): FileReport {
  const { levelGrid: _g, loudnessCurve: _c, closeups: _k, closeupsOmitted: _o, ...rest } = file;
  return { ...rest, spectrogram: null };
}

export async function scanCommand(paths: string[], options: ScanOptions, io: CliIo): Promise<number> {
  const startedAt = new Date().toISOString();
  const loaded = await loadProfile(options.profile, io.cwd);
  const format = chooseFormat(options, io.stdout.isTTY === true);
  const outAbs = options.out ? await checkOutputFolder(options.out, io.cwd) : null;
  if (options.bag) await assertBagTarget(path.resolve(io.cwd, options.bag));
  if (options.upload) await resolveCredentials(options.upload.server, io.env);

  const crawl = await crawlFiles(paths, { include: options.include, exclude: options.exclude, cwd: io.cwd });
  let spectrograms: ScanContext["spectrograms"] = null;
  if (options.spectrograms) {
    const dirAbs = path.resolve(io.cwd, options.spectrograms);
    await mkdir(dirAbs, { recursive: true }).catch((error: { code?: string }) => {
      throw new UsageError(`cannot create --spectrograms folder ${options.spectrograms}: ${error.code ?? String(error)}`);
    });
    spectrograms = { dirAbs, dirShown: options.spectrograms.split(path.sep).join("/").replace(/\/+$/, "") || "." };
  }
  // Supervisors review spectrograms in the portal, so an upload always carries them. Without
  // --spectrograms they are drawn into a folder of their own: beside the resume state (so a resumed scan
  // still finds them), otherwise a temporary one removed after the upload.
  let temporaryImagesDir: string | null = null;
  if (options.upload && !spectrograms) {
    const dirAbs = options.resume
      ? path.resolve(io.cwd, `${options.resume}.images`)
      : (temporaryImagesDir = await mkdtemp(path.join(tmpdir(), "tidemark-images-")));
    await mkdir(dirAbs, { recursive: true });
    spectrograms = { dirAbs, dirShown: dirAbs.split(path.sep).join("/") };
  }
  const context: ScanContext = { profile: loaded.profile, settings: loaded.settings, spectrograms, fingerprint: options.fingerprint, closeups: options.closeups };

  let resume: ResumeState | null = null;
  if (options.resume) {
    resume = openResumeState(path.resolve(io.cwd, options.resume), {
      profileName: loaded.profile.name,
      profileHash: loaded.hash,
      spectrogramDir: spectrograms?.dirShown ?? null,
    });
  }

  const progress = createScanProgress({
    total: crawl.files.length,
    totalBytes: crawl.files.reduce((n, f) => n + f.sizeBytes, 0),
    alreadyDone: 0,
    stream: io.stderr as NodeJS.WritableStream,
    display: progressDisplay(options.quiet, options.progress),
  });
  for (const p of crawl.problems) progress.note(`tidemark: ${p.code}: ${p.message}`);
  if (crawl.files.length === 0 && crawl.problems.length === 0) {
    progress.note(`tidemark: warning: no files matching ${options.include.join(" ")} under ${paths.join(" ")}`);
  }
  // Sidecars are found by path string; a name that is not UTF-8 has none.
  const checksums = await expectedChecksums(
    crawl.files.flatMap((f) => (typeof f.absPath === "string" ? [f.absPath] : [])),
    paths.map((p) => path.resolve(io.cwd, p)),
    options.checksums.map((m) => path.resolve(io.cwd, m)),
    (abs) => path.relative(io.cwd, abs).split(path.sep).join("/"),
  );
  for (const w of checksums.warnings) progress.note(`tidemark: warning: ${w}`);
  const interruption = watchInterrupts(() =>
    progress.note("tidemark: interrupted: finishing the files in progress, then writing the partial report (Ctrl-C again to stop now)"),
  );

  let result;
  try {
    result = await runScan({ files: crawl.files, workers: options.workers, spectralThread: options.spectralThread, context, resume, progress, interruption, expectedChecksums: checksums.byFile });
  } finally {
    interruption.dispose();
    progress.stop();
    resume?.close();
  }

  const problemReports: FileReport[] = crawl.problems.map((p) => ({
    ...errorReport(p.relPath, 0, { code: p.code, message: p.message }),
    ...(p.pathBytes ? { pathBytes: p.pathBytes } : {}),
  }));
  // A checksum for a file that is not there: the delivery is incomplete, and the report says so.
  for (const o of checksums.orphans) {
    const relPath = path.relative(crawl.rootDir, o.absPath).split(path.sep).join("/");
    problemReports.push(errorReport(relPath, 0, { code: "missing-file", message: `${relPath}: ${o.source} has a checksum for it, but the file is not there` }));
  }
  const report = assembleReport(
    { tool: toolInfo(), profile: { name: loaded.profile.name, hash: loaded.hash, limits: profileLimits(loaded.profile) }, startedAt, finishedAt: new Date().toISOString() },
    [...result.reports, ...problemReports],
  );
  // Images drawn only for the upload are not part of what the user asked to see.
  const shown = temporaryImagesDir ? { ...report, files: report.files.map(withoutImages) } : report;
  const text = reportWriters[format](shown, { suites: junitSuitesOf(paths, crawl.rootDir, io.cwd), failOn: options.failOn });
  if (outAbs) await writeAtomically(outAbs, text);
  else io.stdout.write(text);
  // For the technician at a terminal; a pipeline reads the profile from the report itself.
  if (options.profileFrom === "default" && !options.quiet && io.stderr.isTTY) {
    io.stderr.write(
      `tidemark: judged with the default profile ${loaded.profile.name}; for preservation masters give --profile preservation-master or set "profile" in tidemark.json (tidemark init)\n`,
    );
  }

  if (result.interrupted) {
    if (temporaryImagesDir) await rm(temporaryImagesDir, { recursive: true, force: true });
    const left = crawl.files.length - result.reports.length;
    const resumeHint = options.resume ? `; run the same command to resume` : "; add --resume STATE_FILE next time to continue after an interruption";
    io.stderr.write(`tidemark: interrupted: ${result.reports.length} of ${crawl.files.length} file(s) done, ${left} left${resumeHint}\n`);
    return EXIT_CODES.interrupted;
  }
  if (!options.quiet && result.reused > 0) io.stderr.write(`tidemark: ${result.reused} unchanged file(s) taken from ${options.resume}\n`);

  if (options.bag) await writeScanBag(options.bag, paths, report, crawl.files, io);

  let uploadCode: number = EXIT_CODES.ok;
  try {
    if (options.upload) uploadCode = await uploadReport(report, options.upload, path.basename(crawl.rootDir) || "archive", io);
  } finally {
    if (temporaryImagesDir) await rm(temporaryImagesDir, { recursive: true, force: true });
  }
  if (uploadCode !== EXIT_CODES.ok) return uploadCode;
  return scanExitCode(report.summary, options.failOn);
}
