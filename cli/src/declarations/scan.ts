/** `tidemark scan`: flags, help and the normalisation into ScanOptions (the action is commands/scan.ts). */
import { Option, type Command } from "@commander-js/extra-typings";
import { DEFAULT_PROFILE_NAME } from "@tidemark/shared/profiles/builtinProfiles";
import { ProjectDefaults } from "../config/projectConfig.ts";
import { UsageError } from "../errors.ts";
import {
  collect,
  DEFAULT_INCLUDE_GLOBS,
  defaultWorkerCount,
  FAIL_ON_LEVELS,
  parseBatchKey,
  parseCollectionName,
  parseServerUrl,
  parseWorkerCount,
  REPORT_FORMATS,
  type ScanOptions,
} from "../options.ts";
import type { CommandActions } from "../program.ts";
import { finish, globOptions, noValues, PROFILE_HELP, progressOption, type Declared } from "./common.ts";

export function declareScan(program: Command, { run, io }: Declared<CommandActions["scan"]>): void {
  const scan = program
    .command("scan")
    .description("measure every audio file under the given files and folders, judge each against a profile, and report")
    .argument("<paths...>", "files and folders to scan (folders recursively)")
    .option("-p, --profile <name|file>", PROFILE_HELP)
    .addOption(new Option("-f, --format <format>", "report format (default: table on a terminal, else json)").choices(REPORT_FORMATS))
    .option("-o, --out <file>", "write the report to a file instead of stdout (format from its extension if --format is not given)")
    .option("--spectrograms <dir>", "write a spectrogram PNG (and a waveform strip) for each file, mirroring the folder tree")
    .option("--no-fingerprint", "skip the fingerprint that finds the same recording elsewhere (about a third faster; uploads are then not compared)")
    .option("--no-closeups", "skip the close-ups around findings (detailed images and audio excerpts), the level grid and the loudness curve written beside the PNGs")
    .option("-w, --workers <n>", "parallel workers (default: number of cores)", parseWorkerCount)
    .option("--spectral-thread", "measure each file of 10 s or more on two threads even when the workers use every core (default: only when they leave a core spare for each)")
    .option("--no-spectral-thread", "measure each file on one thread only")
    .option("--resume <state-file>", "record progress there, and skip files already measured and unchanged")
    .addOption(new Option("--fail-on <level>", "exit 1 when a file gets this verdict or worse (default: tidemark.json's, else fail)").choices(FAIL_ON_LEVELS))
    .option("-q, --quiet", "no progress display")
    .addOption(progressOption("progress display: auto (on a terminal) or json (JSON lines on stderr, for pipelines)"))
    .option("--checksums <file>", "also check each file against this md5sum/sha256sum-style manifest (repeatable); sidecars such as tape.wav.md5 are read anyway", collect, noValues())
    .option("--bag <dir>", "also write a BagIt bag (RFC 8493) of the scanned files into this new folder, with the report as a tag file")
    .option("--upload", "upload the report and PNGs to the server after the scan")
    .option("--server <url>", `server for --upload (default: tidemark.json's, else the one stored by tidemark login)`, parseServerUrl)
    .option("--collection <name>", "collection to file the batch under (default: tidemark.json's, else the scanned folder's name)", parseCollectionName)
    .option("--batch-key <key>", "idempotency key: the same key uploaded twice is one batch (default: SHA-256 of the report)", parseBatchKey);
  globOptions(scan).action(async (paths, o) => {
    const cliIo = io();
    const project = await ProjectDefaults.load(cliIo.cwd, cliIo.env);
    const wantsUpload = o.upload === true;
    for (const flag of ["server", "collection", "batchKey"] as const) {
      if (o[flag] !== undefined && !wantsUpload) {
        throw new UsageError(`--${flag === "batchKey" ? "batch-key" : flag} is only used with --upload; add --upload or drop it`);
      }
    }
    const { profile, from: profileFrom } = project.profile(o.profile, DEFAULT_PROFILE_NAME);
    const options: ScanOptions = {
      profile,
      profileFrom,
      format: o.format ?? null,
      out: o.out ?? null,
      spectrograms: project.spectrograms(o.spectrograms),
      fingerprint: o.fingerprint,
      closeups: o.closeups,
      workers: o.workers ?? defaultWorkerCount(),
      // Only when asked for either way, so the parsed options of a plain scan stay as they were.
      ...(o.spectralThread !== undefined ? { spectralThread: o.spectralThread } : {}),
      include: project.include(o.include, DEFAULT_INCLUDE_GLOBS),
      exclude: project.exclude(o.exclude),
      resume: o.resume ?? null,
      quiet: o.quiet === true,
      progress: o.progress,
      failOn: project.failOn(o.failOn),
      checksums: o.checksums,
      bag: o.bag ?? null,
      upload: wantsUpload
        ? {
            server: project.server(o.server),
            collection: project.collection(o.collection),
            batchKey: o.batchKey ?? null,
          }
        : null,
    };
    await finish(run(paths, options, cliIo));
  });
}
