/**
 * The command tree. createProgram() only assembles: each command is declared in cli/src/declarations/*
 * (flags typed from their declarations, normalised into the command's options object), and its action
 * is a plain async function, lazy-imported from cli/src/commands/*, which returns an exit code. Tests
 * pass their own actions.
 */
import { Command } from "@commander-js/extra-typings";
import type { EnqueueOptions } from "./commands/enqueue.ts";
import type { WorkerOptions } from "./commands/worker.ts";
import { declareInit, declareMatch, declareProfiles } from "./declarations/local.ts";
import { declareEnqueue, declareWorker } from "./declarations/queue.ts";
import { declareScan } from "./declarations/scan.ts";
import { declareLogin, declareUpload } from "./declarations/upload.ts";
import { declareVerify } from "./declarations/verify.ts";
import { EXIT_CODES_HELP } from "./errors.ts";
import { processIo, type CliIo } from "./io.ts";
import type { MatchOptions } from "./match/matchOptions.ts";
import type { InitOptions, LoginOptions, ProfilesOptions, ScanOptions, UploadOptions, VerifyOptions } from "./options.ts";
import { toolInfo } from "./toolInfo.ts";

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

// Each command module is imported only when its command runs, so `tidemark --help` stays quick.
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

export function createProgram(actions: Partial<CommandActions & QueueCommandActions> = {}, io: () => CliIo = processIo): Command {
  const run: CommandActions & QueueCommandActions = { ...defaultActions, ...defaultQueueActions, ...actions };
  const program = new Command("tidemark")
    .description("Batch spectral quality control for sound archive transfers (WAV, BWF, RF64).")
    .version(toolInfo().version, "-V, --version", "print the version")
    .helpOption("-h, --help", "show help")
    .showHelpAfterError("(run with --help for usage)")
    .exitOverride()
    .addHelpText("after", EXIT_CODES_HELP);

  // In the order `tidemark --help` lists them.
  declareScan(program, { run: run.scan, io });
  declareVerify(program, { run: run.verify, io });
  declareUpload(program, { run: run.upload, io });
  declareProfiles(program, { run: run.profiles, io });
  declareInit(program, { run: run.init, io });
  declareLogin(program, { run: run.login, io });
  declareEnqueue(program, { run: run.enqueue, io });
  declareWorker(program, { run: run.worker, io });
  declareMatch(program, { run: run.match, io });
  return program;
}
