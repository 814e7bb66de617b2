/**
 * The command tree. createProgram() only declares: each action normalises its options and calls a plain
 * async function (lazy-imported), which returns an exit code. Tests pass their own actions.
 */
import { Command, Option } from "commander";
import { DEFAULT_PROFILE_NAME } from "@tidemark/shared/profiles/builtinProfiles";
import { ProjectDefaults } from "./config/projectConfig.ts";
import { EXIT_CODES_HELP, ExitError, UsageError, type FailOn } from "./errors.ts";
import { processIo, type CliIo } from "./io.ts";
import {
  collect,
  DEFAULT_INCLUDE_GLOBS,
  defaultWorkerCount,
  FAIL_ON_LEVELS,
  PROGRESS_MODES,
  type InitOptions,
  type ProgressMode,
  parseBatchKey,
  parseCollectionName,
  parseServerUrl,
  parseToken,
  parseWorkerCount,
  REPORT_FORMATS,
  type LoginOptions,
  type ProfilesOptions,
  type ReportFormat,
  type ScanOptions,
  type UploadOptions,
  type VerifyOptions,
} from "./options.ts";
import type { EnqueueOptions } from "./commands/enqueue.ts";
import type { WorkerOptions } from "./commands/worker.ts";
import { secondsParser } from "./queue/options.ts";
import { parseMount, type PathMount } from "./queue/pathMounts.ts";
import { toolInfo } from "./toolInfo.ts";
import { DEFAULT_MATCH_LIMIT, MATCH_EXIT_CODES_HELP, parseMatchLimit, type MatchOptions } from "./match/matchOptions.ts";

/** What each command does once its arguments are parsed; resolves to the exit code. */
export interface CommandActions {
  scan(paths: string[], options: ScanOptions, io: CliIo): Promise<number>;
  verify(paths: string[], options: VerifyOptions, io: CliIo): Promise<number>;
  upload(reportPath: string | null, options: UploadOptions, io: CliIo): Promise<number>;
  profiles(name: string | null, options: ProfilesOptions, io: CliIo): Promise<number>;
  login(options: LoginOptions, io: CliIo): Promise<number>;
  match(file: string, options: MatchOptions, io: CliIo): Promise<number>;
  init(options: InitOptions, io: CliIo): Promise<number>;
}

/** Distributed scanning (a queue on the server): register files as jobs, and work them off. */
export interface QueueCommandActions {
  enqueue(paths: string[], options: EnqueueOptions, io: CliIo): Promise<number>;
  worker(options: WorkerOptions, io: CliIo): Promise<number>;
}

const defaultQueueActions: QueueCommandActions = {
  enqueue: async (...args) => (await import("./commands/enqueue.ts")).enqueueCommand(...args),
  worker: async (...args) => (await import("./commands/worker.ts")).workerCommand(...args),
};

const defaultActions: CommandActions = {
  scan: async (...args) => (await import("./commands/scan.ts")).scanCommand(...args),
  verify: async (...args) => (await import("./commands/verify.ts")).verifyCommand(...args),
  upload: async (...args) => (await import("./commands/upload.ts")).uploadCommand(...args),
  profiles: async (...args) => (await import("./commands/profiles.ts")).profilesCommand(...args),
  login: async (...args) => (await import("./commands/login.ts")).loginCommand(...args),
  match: async (...args) => (await import("./commands/match.ts")).matchCommand(...args),
  init: async (...args) => (await import("./commands/init.ts")).initCommand(...args),
};

async function finish(code: Promise<number>): Promise<void> {
  const exitCode = await code;
  if (exitCode !== 0) throw new ExitError(exitCode);
}

function globOptions(cmd: Command): Command {
  return cmd
    .addOption(
      new Option("--include <glob>", "file names to scan, repeatable, case-insensitive").argParser(collect).default([], DEFAULT_INCLUDE_GLOBS.join(" ")),
    )
    .addOption(
      new Option("--exclude <glob>", "files or folders to skip, repeatable (matched against the name or the relative path)").argParser(collect).default([], "none"),
    );
}

const PROFILE_HELP = `built-in profile name or a profile JSON file (default: tidemark.json's, else ${DEFAULT_PROFILE_NAME})`;
const SERVER_HELP = "server (default: tidemark.json's, else the one stored by tidemark login)";

export function createProgram(actions: Partial<CommandActions & QueueCommandActions> = {}, io: () => CliIo = processIo): Command {
  const run: CommandActions & QueueCommandActions = { ...defaultActions, ...defaultQueueActions, ...actions };
  const program = new Command("tidemark")
    .description("Batch spectral quality control for sound archive transfers (WAV, BWF, RF64).")
    .version(toolInfo().version, "-V, --version", "print the version")
    .helpOption("-h, --help", "show help")
    .showHelpAfterError("(run with --help for usage)")
    .exitOverride()
    .addHelpText("after", EXIT_CODES_HELP);

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
    .option("--resume <state-file>", "record progress there, and skip files already measured and unchanged")
    .addOption(new Option("--fail-on <level>", "exit 1 when a file gets this verdict or worse (default: tidemark.json's, else fail)").choices(FAIL_ON_LEVELS))
    .option("-q, --quiet", "no progress display")
    .addOption(new Option("--progress <mode>", "progress display: auto (on a terminal) or json (JSON lines on stderr, for pipelines)").choices(PROGRESS_MODES).default("auto"))
    .option("--checksums <file>", "also check each file against this md5sum/sha256sum-style manifest (repeatable); sidecars such as tape.wav.md5 are read anyway", collect, [])
    .option("--bag <dir>", "also write a BagIt bag (RFC 8493) of the scanned files into this new folder, with the report as a tag file")
    .option("--upload", "upload the report and PNGs to the server after the scan")
    .option("--server <url>", `server for --upload (default: tidemark.json's, else the one stored by tidemark login)`, parseServerUrl)
    .option("--collection <name>", "collection to file the batch under (default: tidemark.json's, else the scanned folder's name)", parseCollectionName)
    .option("--batch-key <key>", "idempotency key: the same key uploaded twice is one batch (default: SHA-256 of the report)", parseBatchKey);
  globOptions(scan).action(async (paths: string[], o: Record<string, unknown>) => {
    const cliIo = io();
    const project = ProjectDefaults.load(cliIo.cwd, cliIo.env);
    const wantsUpload = o.upload === true;
    for (const flag of ["server", "collection", "batchKey"] as const) {
      if (o[flag] !== undefined && !wantsUpload) {
        throw new UsageError(`--${flag === "batchKey" ? "batch-key" : flag} is only used with --upload; add --upload or drop it`);
      }
    }
    const { profile, from: profileFrom } = project.profile(o.profile as string | undefined, DEFAULT_PROFILE_NAME);
    const options: ScanOptions = {
      profile,
      profileFrom,
      format: (o.format as ReportFormat | undefined) ?? null,
      out: (o.out as string | undefined) ?? null,
      spectrograms: project.spectrograms(o.spectrograms as string | undefined),
      fingerprint: o.fingerprint !== false,
      closeups: o.closeups !== false,
      workers: (o.workers as number | undefined) ?? defaultWorkerCount(),
      include: project.include(o.include as string[], DEFAULT_INCLUDE_GLOBS),
      exclude: project.exclude(o.exclude as string[]),
      resume: (o.resume as string | undefined) ?? null,
      quiet: o.quiet === true,
      progress: o.progress as ProgressMode,
      failOn: project.failOn(o.failOn as FailOn | undefined),
      checksums: o.checksums as string[],
      bag: (o.bag as string | undefined) ?? null,
      upload: wantsUpload
        ? {
            server: project.server(o.server as string | undefined),
            collection: project.collection(o.collection as string | undefined),
            batchKey: (o.batchKey as string | undefined) ?? null,
          }
        : null,
    };
    await finish(run.scan(paths, options, cliIo));
  });

  const verify = program
    .command("verify")
    .description("recompute SHA-256 of the files and compare with an earlier report, or check a BagIt bag against its manifests")
    .argument("<paths...>", "files and folders scanned for that report, or one bag folder (with bagit.txt)")
    .option("--against <report.json>", "the earlier JSON report (not needed for a bag)")
    .option("--json", "print the comparison as JSON")
    .option("--checksums <file>", "also check the files against this md5sum/sha256sum-style manifest (repeatable); sidecars such as tape.wav.md5 are read anyway", collect, [])
    .option("-q, --quiet", "no progress display")
    .addOption(new Option("--progress <mode>", "progress display: auto (on a terminal) or json (JSON lines on stderr)").choices(PROGRESS_MODES).default("auto"))
    .option("--upload", "send each file's outcome to the server's fixity history (needs --against)")
    .option("--server <url>", "server for --upload (default: tidemark.json's, else the one stored by tidemark login)", parseServerUrl)
    .option("--collection <name>", "collection the files were scanned into, for --upload (default: tidemark.json's)", parseCollectionName);
  globOptions(verify).action(async (paths: string[], o: Record<string, unknown>) => {
    const cliIo = io();
    const project = ProjectDefaults.load(cliIo.cwd, cliIo.env);
    const options: VerifyOptions = {
      against: (o.against as string | undefined) ?? null,
      include: project.include(o.include as string[], DEFAULT_INCLUDE_GLOBS),
      exclude: project.exclude(o.exclude as string[]),
      json: o.json === true,
      quiet: o.quiet === true,
      progress: o.progress as ProgressMode,
      checksums: o.checksums as string[],
      upload: o.upload === true ? { server: project.server(o.server as string | undefined), collection: project.collection(o.collection as string | undefined) } : null,
    };
    if (!options.upload && (o.server !== undefined || o.collection !== undefined)) throw new UsageError("--server and --collection are only used with --upload; add --upload or drop them");
    await finish(run.verify(paths, options, cliIo));
  });

  program
    .command("upload")
    .description("upload an existing JSON report (and its PNGs) to the server, or send the spooled batches")
    .argument("[report]", "a JSON report written by tidemark scan")
    .option("--spool", "send the batches spooled while the server was unreachable")
    .option("--server <url>", SERVER_HELP, parseServerUrl)
    .option("--collection <name>", "collection to file the batch under (required with a report unless tidemark.json names one)", parseCollectionName)
    .option("--batch-key <key>", "idempotency key (default: SHA-256 of the report)", parseBatchKey)
    .action(async (report: string | undefined, o: Record<string, unknown>) => {
      const cliIo = io();
      const project = ProjectDefaults.load(cliIo.cwd, cliIo.env);
      const spool = o.spool === true;
      if (spool === (report !== undefined)) {
        throw new UsageError(spool ? "give either a report file or --spool, not both" : "expected a report file to upload (or --spool to send spooled batches)");
      }
      const options: UploadOptions = {
        spool,
        server: spool ? ((o.server as string | undefined) ?? null) : project.server(o.server as string | undefined),
        // Spooled batches carry their own collection: tidemark.json's does not apply to them.
        collection: spool ? ((o.collection as string | undefined) ?? null) : project.collection(o.collection as string | undefined),
        batchKey: (o.batchKey as string | undefined) ?? null,
      };
      await finish(run.upload(report ?? null, options, cliIo));
    });

  program
    .command("profiles")
    .description("list the built-in profiles, or print one as JSON (a starting point for a custom profile file)")
    .argument("[name|file]", "a built-in profile name, or a profile JSON file to check")
    .option("--json", "list the profiles as JSON")
    .action(async (name: string | undefined, o: Record<string, unknown>) => {
      await finish(run.profiles(name ?? null, { json: o.json === true }, io()));
    });

  program
    .command("init")
    .description(`write a ${"tidemark.json"} in this folder: the project's defaults for profile, collection, server and more (asks on a terminal)`)
    .option("-p, --profile <name|file>", "profile to judge with")
    .option("--collection <name>", "collection uploads are filed under", parseCollectionName)
    .option("--server <url>", "server for upload, enqueue and worker", parseServerUrl)
    .option("--include <glob>", "file names to scan, repeatable", collect, [])
    .option("--exclude <glob>", "files or folders to skip, repeatable", collect, [])
    .option("--spectrograms <dir>", "folder for spectrogram PNGs")
    .addOption(new Option("--fail-on <level>", "exit 1 from this verdict on").choices(FAIL_ON_LEVELS))
    .option("--force", "overwrite an existing tidemark.json")
    .option("-y, --yes", "ask nothing; write only what the flags give")
    .action(async (o: Record<string, unknown>) => {
      const options: InitOptions = {
        profile: (o.profile as string | undefined) ?? null,
        collection: (o.collection as string | undefined) ?? null,
        server: (o.server as string | undefined) ?? null,
        include: o.include as string[],
        exclude: o.exclude as string[],
        spectrograms: (o.spectrograms as string | undefined) ?? null,
        failOn: (o.failOn as FailOn | undefined) ?? null,
        force: o.force === true,
        yes: o.yes === true,
      };
      await finish(run.init(options, io()));
    });

  program
    .command("login")
    .description("sign in to a server and store an API token for upload (in the config dir, mode 0600)")
    .option("--server <url>", "server URL (default: tidemark.json's)", parseServerUrl)
    .option("--token <id:secret>", "store this API token instead of signing in", parseToken)
    .option("--email <email>", "account e-mail (asked for on a terminal when missing)")
    .option("--password-stdin", "read the password from stdin")
    .option("--token-name <name>", "name of the token created on the server (default: tidemark-cli on <host>)")
    .action(async (o: Record<string, unknown>) => {
      const cliIo = io();
      const server = ProjectDefaults.load(cliIo.cwd, cliIo.env).server(o.server as string | undefined);
      if (!server) throw new UsageError("expected --server URL (or a server in tidemark.json): the server to sign in to");
      const options: LoginOptions = {
        server,
        token: (o.token as string | undefined) ?? null,
        email: (o.email as string | undefined) ?? null,
        passwordStdin: o.passwordStdin === true,
        tokenName: (o.tokenName as string | undefined) ?? null,
      };
      if (options.token && (options.email || options.passwordStdin)) {
        throw new UsageError("give either --token or --email/--password-stdin, not both");
      }
      await finish(run.login(options, cliIo));
    });

  const enqueue = program
    .command("enqueue")
    .description("register every audio file under the paths (on shared storage) as a job of a named run on the server, for workers to scan")
    .argument("<paths...>", "files and folders on the shared storage (folders recursively)")
    .option("--collection <name>", "collection the run's batch is filed under (default: tidemark.json's; required)", parseCollectionName)
    .option("--server <url>", SERVER_HELP, parseServerUrl)
    .option("-p, --profile <name|file>", PROFILE_HELP)
    .option("--run <name>", "run to add the files to (default: the scanned folder's absolute path, so running again finds the same run)", parseCollectionName)
    .option("--json", "print the run and the counts as JSON");
  globOptions(enqueue).action(async (paths: string[], o: Record<string, unknown>) => {
    const cliIo = io();
    const project = ProjectDefaults.load(cliIo.cwd, cliIo.env);
    const collection = project.collection(o.collection as string | undefined);
    if (!collection) throw new UsageError("expected --collection NAME (or a collection in tidemark.json): the collection the run's batch is filed under");
    const options: EnqueueOptions = {
      server: project.server(o.server as string | undefined),
      collection,
      profile: project.profile(o.profile as string | undefined, DEFAULT_PROFILE_NAME).profile,
      run: (o.run as string | undefined) ?? null,
      include: project.include(o.include as string[], DEFAULT_INCLUDE_GLOBS),
      exclude: project.exclude(o.exclude as string[]),
      json: o.json === true,
    };
    await finish(run.enqueue(paths, options, cliIo));
  });

  program
    .command("worker")
    .description("take jobs from the server's queue, scan each file with the same engine as scan, and send each result; stops on SIGTERM/SIGINT")
    .option("--server <url>", SERVER_HELP, parseServerUrl)
    .option("-c, --concurrency <n>", "jobs measured at once (worker threads)", parseWorkerCount, 1)
    .option("--name <name>", "this worker's name in the portal (default: host#pid)")
    .option("--poll <seconds>", "wait between claims while the queue is empty", secondsParser(0.2, 300), 2)
    .option("--grace <seconds>", "after SIGTERM, how long jobs in hand may finish before they are released", secondsParser(0, 86_400), 60)
    .option("--offline-limit <seconds>", "give up when the server, once reached, stays unreachable this long", secondsParser(1, 604_800), 600)
    .addOption(new Option("--mount <from=to>", "the storage is mounted elsewhere here: read enqueued paths under FROM from TO (repeatable)").argParser(parseMount).default([], "none"))
    .option("--no-images", "send no spectrogram or waveform PNGs (faster; the portal shows none)")
    .option("--exit-when-idle", "exit once the queue is empty instead of waiting for more")
    .option("-q, --quiet", "no line per job")
    .addOption(new Option("--progress <mode>", "progress display: auto (a live line on a terminal: bytes of each job in hand, ETA) or json (JSON lines on stderr)").choices(PROGRESS_MODES).default("auto"))
    .action(async (o: Record<string, unknown>) => {
      const cliIo = io();
      const options: WorkerOptions = {
        server: ProjectDefaults.load(cliIo.cwd, cliIo.env).server(o.server as string | undefined),
        concurrency: o.concurrency as number,
        name: (o.name as string | undefined) ?? null,
        pollSeconds: o.poll as number,
        graceSeconds: o.grace as number,
        offlineSeconds: o.offlineLimit as number,
        mounts: o.mount as PathMount[],
        images: o.images !== false,
        exitWhenIdle: o.exitWhenIdle === true,
        quiet: o.quiet === true,
        progress: o.progress as ProgressMode,
      };
      await finish(run.worker(options, cliIo));
    });

  program
    .command("match")
    .description("find the same recording elsewhere: compare <file>'s fingerprint with those in earlier reports, or ask the server")
    .argument("<file>", "a WAV, BWF or RF64 file")
    .option("--against <report.json>", "a JSON report written by tidemark scan (repeatable)", collect, [])
    .option("--server <url>", "ask this server's index instead (token from TIDEMARK_TOKEN or tidemark login)", parseServerUrl)
    .option("-n, --limit <n>", `at most this many matches (default ${DEFAULT_MATCH_LIMIT})`, parseMatchLimit)
    .option("--json", "print the matches as JSON")
    .addHelpText("after", MATCH_EXIT_CODES_HELP)
    .action(async (file: string, o: Record<string, unknown>) => {
      const against = o.against as string[];
      const server = (o.server as string | undefined) ?? null;
      if ((against.length > 0) === (server !== null)) {
        throw new UsageError(server ? "give either --against REPORT.json or --server URL, not both" : "expected --against REPORT.json or --server URL: what to compare the file with");
      }
      const options: MatchOptions = { against, server, limit: (o.limit as number | undefined) ?? DEFAULT_MATCH_LIMIT, json: o.json === true };
      await finish(run.match(file, options, io()));
    });

  return program;
}
