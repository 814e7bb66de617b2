/**
 * `tidemark enqueue <paths...> --collection NAME`: crawls the paths as `scan` would and registers every
 * matching file (its path on the shared storage, size and mtime) as a job of a named run on the server.
 * Workers anywhere that reach the server and the same storage then scan them. Running it again adds what
 * is new, skips what is done unchanged or still waiting, and queues dead-lettered files again.
 */
import type { CreateRunResultDto, EnqueueFileDto, EnqueueFilesResultDto } from "@tidemark/shared/types/api";
import { resolveCredentials } from "../config/storedLogin.ts";
import { createApiClient, retryPolicyFrom } from "../api/apiClient.ts";
import { exitErrorFor } from "../api/apiExit.ts";
import { EXIT_CODES, ExitError } from "../errors.ts";
import type { CliIo } from "../io.ts";
import { loadProfile } from "../profiles/loadProfile.ts";
import { crawlFiles } from "../scan/crawlFiles.ts";
import { toolInfo } from "../toolInfo.ts";

export interface EnqueueOptions {
  server: string | null;
  collection: string;
  profile: string;
  /** null: the scanned root folder's absolute path names the run, so running again finds the same run. */
  run: string | null;
  include: string[];
  exclude: string[];
  json: boolean;
}

/** The server takes at most 1000 files and a 256 kB body a request; stay under both. */
const MAX_FILES_PER_REQUEST = 1000;
const MAX_BYTES_PER_REQUEST = 200_000;
/** Run names are labels of at most 200 characters; a deeper root keeps its most telling end. */
const MAX_RUN_NAME = 200;

export function defaultRunName(rootDir: string): string {
  return rootDir.length <= MAX_RUN_NAME ? rootDir : `…${rootDir.slice(-(MAX_RUN_NAME - 1))}`;
}

export function chunkFiles(files: EnqueueFileDto[]): EnqueueFileDto[][] {
  const chunks: EnqueueFileDto[][] = [];
  let current: EnqueueFileDto[] = [];
  let bytes = 0;
  for (const file of files) {
    const size = JSON.stringify(file).length + 1;
    if (current.length > 0 && (current.length >= MAX_FILES_PER_REQUEST || bytes + size > MAX_BYTES_PER_REQUEST)) {
      chunks.push(current);
      current = [];
      bytes = 0;
    }
    current.push(file);
    bytes += size;
  }
  if (current.length > 0) chunks.push(current);
  return chunks;
}

export async function enqueueCommand(paths: string[], options: EnqueueOptions, io: CliIo): Promise<number> {
  const log = (line: string): void => void io.stderr.write(`tidemark: ${line}\n`);
  const loaded = await loadProfile(options.profile, io.cwd);
  const { server, token } = await resolveCredentials(options.server, io.env);
  const crawl = await crawlFiles(paths, { include: options.include, exclude: options.exclude, cwd: io.cwd });
  for (const p of crawl.problems) log(`${p.code}: ${p.message} (not queued)`);
  // Nothing to queue: no run and no batch are made for it (they would wait for ever, empty).
  if (crawl.files.length === 0) {
    throw new ExitError(
      EXIT_CODES.usage,
      `nothing to enqueue: no files matching ${options.include.join(" ")} under ${paths.join(" ")}${crawl.problems.length ? ` (${crawl.problems.length} could not be read)` : ""}; no run was created`,
    );
  }

  const api = createApiClient(server, token, retryPolicyFrom(io.env), (attempt, problem, delayMs) =>
    log(`request attempt ${attempt} failed (${problem}); retrying in ${(delayMs / 1000).toFixed(1)} s`),
  );
  const totals: EnqueueFilesResultDto = { added: 0, requeued: 0, alreadyDone: 0, pending: 0, changed: [] };
  let created: CreateRunResultDto;
  try {
    created = (
      await api.postJson<CreateRunResultDto>("/api/runs", {
        collection: options.collection,
        name: options.run ?? defaultRunName(crawl.rootDir),
        root: crawl.rootDir,
        profile: { name: loaded.profile.name, hash: loaded.hash, definition: loaded.profile },
        tool: toolInfo(),
      })
    ).body;
    // A name that is not UTF-8 goes with its exact bytes, so the worker opens that file and not a look-alike.
    const files = crawl.files.map((f): EnqueueFileDto => ({ path: f.relPath, ...(f.pathBytes ? { pathBytes: f.pathBytes } : {}), sizeBytes: f.sizeBytes, mtimeMs: f.mtimeMs }));
    for (const chunk of chunkFiles(files)) {
      const { body } = await api.postJson<EnqueueFilesResultDto>(`/api/runs/${created.run.id}/files`, { files: chunk });
      totals.added += body.added;
      totals.requeued += body.requeued;
      totals.alreadyDone += body.alreadyDone;
      totals.pending += body.pending;
      totals.changed.push(...body.changed);
    }
  } catch (error) {
    throw exitErrorFor(error, server, "enqueue");
  }

  const run = created.run;
  for (const p of totals.changed) log(`changed since it was scanned in this run, not queued: ${p} (enqueue it into a new run with --run NAME)`);
  if (options.json) {
    io.stdout.write(`${JSON.stringify({ run: { id: run.id, name: run.name, batchId: run.batchId, created: created.created }, ...totals }, null, 2)}\n`);
  } else {
    io.stdout.write(
      `run ${run.id} "${run.name}" (${created.created ? "new" : "existing"}, batch ${run.batchId}): ${totals.added} queued, ${totals.requeued} queued again, ` +
        `${totals.alreadyDone} already done, ${totals.pending} waiting, ${totals.changed.length} changed\n`,
    );
  }
  return crawl.problems.length > 0 ? EXIT_CODES.failed : EXIT_CODES.ok;
}
