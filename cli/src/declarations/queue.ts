/** `tidemark enqueue` and `tidemark worker`: distributed scanning through the server's queue. */
import { Option, type Command } from "@commander-js/extra-typings";
import { DEFAULT_PROFILE_NAME } from "@tidemark/shared/profiles/builtinProfiles";
import type { EnqueueOptions } from "../commands/enqueue.ts";
import type { WorkerOptions } from "../commands/worker.ts";
import { ProjectDefaults } from "../config/projectConfig.ts";
import { UsageError } from "../errors.ts";
import { DEFAULT_INCLUDE_GLOBS, parseCollectionName, parseServerUrl, parseWorkerCount } from "../options.ts";
import type { QueueCommandActions } from "../program.ts";
import { secondsParser } from "../queue/options.ts";
import { parseMount, type PathMount } from "../queue/pathMounts.ts";
import { finish, globOptions, PROFILE_HELP, progressOption, SERVER_HELP, type Declared } from "./common.ts";

export function declareEnqueue(program: Command, { run, io }: Declared<QueueCommandActions["enqueue"]>): void {
  const enqueue = program
    .command("enqueue")
    .description("register every audio file under the paths (on shared storage) as a job of a named run on the server, for workers to scan")
    .argument("<paths...>", "files and folders on the shared storage (folders recursively)")
    .option("--collection <name>", "collection the run's batch is filed under (default: tidemark.json's; required)", parseCollectionName)
    .option("--server <url>", SERVER_HELP, parseServerUrl)
    .option("-p, --profile <name|file>", PROFILE_HELP)
    .option("--run <name>", "run to add the files to (default: the scanned folder's absolute path, so running again finds the same run)", parseCollectionName)
    .option("--json", "print the run and the counts as JSON");
  globOptions(enqueue).action(async (paths, o) => {
    const cliIo = io();
    const project = await ProjectDefaults.load(cliIo.cwd, cliIo.env);
    const collection = project.collection(o.collection);
    if (!collection) throw new UsageError("expected --collection NAME (or a collection in tidemark.json): the collection the run's batch is filed under");
    const options: EnqueueOptions = {
      server: project.server(o.server),
      collection,
      profile: project.profile(o.profile, DEFAULT_PROFILE_NAME).profile,
      run: o.run ?? null,
      include: project.include(o.include, DEFAULT_INCLUDE_GLOBS),
      exclude: project.exclude(o.exclude),
      json: o.json === true,
    };
    await finish(run(paths, options, cliIo));
  });
}

/** No mounts unless --mount is given (typed PathMount[], not a readonly empty tuple). */
const noMounts = (): PathMount[] => [];

export function declareWorker(program: Command, { run, io }: Declared<QueueCommandActions["worker"]>): void {
  program
    .command("worker")
    .description("take jobs from the server's queue, scan each file with the same engine as scan, and send each result; stops on SIGTERM/SIGINT")
    .option("--server <url>", SERVER_HELP, parseServerUrl)
    .option("-c, --concurrency <n>", "jobs measured at once (worker threads)", parseWorkerCount, 1)
    .option("--name <name>", "this worker's name in the portal (default: host#pid)")
    .option("--poll <seconds>", "wait between claims while the queue is empty", secondsParser(0.2, 300), 2)
    .option("--grace <seconds>", "after SIGTERM, how long jobs in hand may finish before they are released", secondsParser(0, 86_400), 60)
    .option("--offline-limit <seconds>", "give up when the server, once reached, stays unreachable this long", secondsParser(1, 604_800), 600)
    .addOption(new Option("--mount <from=to>", "the storage is mounted elsewhere here: read enqueued paths under FROM from TO (repeatable)").argParser(parseMount).default(noMounts(), "none"))
    .option("--no-images", "send no spectrogram or waveform PNGs (faster; the portal shows none)")
    .option("--exit-when-idle", "exit once the queue is empty instead of waiting for more")
    .option("-q, --quiet", "no line per job")
    .addOption(progressOption("progress display: auto (a live line on a terminal: bytes of each job in hand, ETA) or json (JSON lines on stderr)"))
    .action(async (o) => {
      const cliIo = io();
      const options: WorkerOptions = {
        server: (await ProjectDefaults.load(cliIo.cwd, cliIo.env)).server(o.server),
        concurrency: o.concurrency,
        name: o.name ?? null,
        pollSeconds: o.poll,
        graceSeconds: o.grace,
        offlineSeconds: o.offlineLimit,
        mounts: o.mount,
        images: o.images,
        exitWhenIdle: o.exitWhenIdle === true,
        quiet: o.quiet === true,
        progress: o.progress,
      };
      await finish(run(options, cliIo));
    });
}
