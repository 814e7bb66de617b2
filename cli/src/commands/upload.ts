/** `tidemark upload REPORT.json --collection NAME` and `tidemark upload --spool`. */
import path from "node:path";
import { resolveCredentials } from "../config/storedLogin.ts";
import { spoolDir } from "../config/userDirs.ts";
import { ApiError, retryPolicyFrom } from "../api/apiClient.ts";
import { exitErrorFor, isAuthRefusal } from "../api/apiExit.ts";
import { EXIT_CODES, oneLine, UsageError } from "../errors.ts";
import type { CliIo } from "../io.ts";
import type { UploadOptions } from "../options.ts";
import { defaultBatchKey, deliverBatch, describeDelivered } from "../upload/deliverBatch.ts";
import { postBatch } from "../upload/ingestClient.ts";
import { collectReportImages } from "../upload/reportImages.ts";
import { listRejected, listSpooled, loadSpooled, rejectSpooled, REJECTED_DIR, removeSpooled } from "../upload/spool.ts";
import { readReport } from "./verify.ts";

/** A refusal's exit code: a refused token says how to log in (3), any other refusal is 2. */
function refusalExit(error: ApiError, server: string, log: (line: string) => void): number {
  if (isAuthRefusal(error)) {
    log(exitErrorFor(error, server, "upload").message);
    return EXIT_CODES.auth;
  }
  return EXIT_CODES.usage;
}

async function uploadOne(reportPath: string, options: UploadOptions, io: CliIo): Promise<number> {
  const log = (line: string): void => void io.stderr.write(`tidemark: ${line}\n`);
  if (!options.collection) throw new UsageError("expected --collection NAME (or a collection in tidemark.json): which collection the batch belongs to");
  const { report, text } = await readReport(reportPath, io.cwd);
  const { server, token } = await resolveCredentials(options.server, io.env);
  const reportDir = path.dirname(path.resolve(io.cwd, reportPath));
  const { images, missing } = await collectReportImages(report, [io.cwd, reportDir]);
  for (const m of missing) log(`warning: image ${m} not found, not uploaded`);
  // The file's own bytes are sent and hashed, so this matches the key of `scan --upload` for the same report.
  const batch = { reportJson: text, collection: options.collection, batchKey: options.batchKey ?? defaultBatchKey(text), images };
  const outcome = await deliverBatch(server, token, batch, { env: io.env, log, spoolWhenRejected: false });
  if (outcome.kind === "delivered") {
    log(describeDelivered(server, outcome.result));
    return EXIT_CODES.ok;
  }
  log(outcome.reason);
  if (outcome.kind === "spooled") {
    log(`not delivered: the batch is kept in ${outcome.dir}; send it later with: tidemark upload --spool`);
    return outcome.wrongServer ? EXIT_CODES.unreachable : EXIT_CODES.notDelivered;
  }
  return refusalExit(outcome.error, server, log);
}

async function sendSpool(options: UploadOptions, io: CliIo): Promise<number> {
  const log = (line: string): void => void io.stderr.write(`tidemark: ${line}\n`);
  const root = spoolDir(io.env);
  const dirs = await listSpooled(root);
  let unreachable = 0;
  let rejected = 0;
  let refusedToken = 0;
  if (dirs.length === 0) log(`nothing spooled in ${root}`);
  for (const dir of dirs) {
    let spooled;
    try {
      spooled = await loadSpooled(dir);
    } catch (error) {
      log(`skipping ${dir}: ${oneLine(error)}`);
      rejected += 1;
      continue;
    }
    if (options.server && spooled.server !== options.server) continue;
    const { server, token } = await resolveCredentials(spooled.server, io.env);
    try {
      const result = await postBatch(server, token, spooled.batch, retryPolicyFrom(io.env), (attempt, problem) =>
        log(`${path.basename(dir)}: attempt ${attempt} failed (${problem})`),
      );
      log(describeDelivered(server, result));
      await removeSpooled(dir);
    } catch (error) {
      if (error instanceof ApiError && !isAuthRefusal(error)) {
        // Sending it again cannot help: kept aside with the reason, and never retried.
        const moved = await rejectSpooled(root, dir, { status: error.status, code: error.code, message: error.message, server });
        log(`${path.basename(dir)} was refused (${error.message}); moved to ${moved}`);
        rejected += 1;
      } else if (isAuthRefusal(error)) {
        refusedToken += 1;
        log(`${path.basename(dir)} stays spooled: ${exitErrorFor(error, server, "upload").message}`);
      } else {
        unreachable += 1;
        log(`${path.basename(dir)} stays spooled: ${oneLine(error)}`);
      }
    }
  }
  const refused = await listRejected(root);
  if (refused.length > 0) {
    log(`${refused.length} batch(es) the server refused wait in ${path.join(root, REJECTED_DIR)} (fix the cause, then upload the report again):`);
    for (const r of refused) log(`  ${path.basename(r.dir)}: ${r.reason ? `${r.reason.message} (${r.reason.server}, ${r.reason.rejectedAt})` : "reason unknown (rejected.json unreadable)"}`);
  }
  if (refusedToken > 0) return EXIT_CODES.auth;
  if (rejected > 0) return EXIT_CODES.usage;
  if (unreachable > 0) log(`not delivered: ${unreachable} batch(es) stay spooled; send them later with: tidemark upload --spool`);
  return unreachable > 0 ? EXIT_CODES.notDelivered : EXIT_CODES.ok;
}

export async function uploadCommand(reportPath: string | null, options: UploadOptions, io: CliIo): Promise<number> {
  if (options.spool) {
    if (options.collection || options.batchKey) throw new UsageError("--collection and --batch-key come from each spooled batch; drop them with --spool");
    return sendSpool(options, io);
  }
  return uploadOne(reportPath as string, options, io);
}
