/**
 * Delivers a batch, or keeps it: sent when the server takes it, spooled when the server stays
 * unreachable (or, when asked, when it refuses), so no scan result is ever lost to a network. A refused
 * token keeps the batch in the spool (log in, then `upload --spool`); any other refusal (4xx) files it
 * under rejected/ with the reason, since sending it again cannot help.
 */
import { createHash } from "node:crypto";
import type { IngestResultDto } from "@tidemark/shared/types/api";
import { ApiError, retryPolicyFrom, ServerUnreachableError, WrongServerError } from "../api/apiClient.ts";
import { spoolDir } from "../config/userDirs.ts";
import { oneLine } from "../errors.ts";
import { postBatch, type IngestBatch } from "./ingestClient.ts";
import { rejectSpooled, spoolBatch } from "./spool.ts";

export type DeliveryOutcome =
  | { kind: "delivered"; result: IngestResultDto }
  /** `wrongServer`: the URL is not a Tidemark server (TLS/protocol/non-JSON): fix it before sending the spool. */
  | { kind: "spooled"; reason: string; dir: string; wrongServer: boolean }
  | { kind: "rejected"; reason: string; error: ApiError; spooledDir: string | null };

/** Default idempotency key: the SHA-256 of the report's JSON, so re-sending the same report is one batch. */
export function defaultBatchKey(reportJson: string): string {
  return createHash("sha256").update(reportJson).digest("hex");
}

export async function deliverBatch(
  server: string,
  token: string,
  batch: IngestBatch,
  options: { env: NodeJS.ProcessEnv; log: (line: string) => void; spoolWhenRejected: boolean },
): Promise<DeliveryOutcome> {
  const root = spoolDir(options.env);
  const keep = async (): Promise<string> => spoolBatch(root, server, batch);
  try {
    const result = await postBatch(server, token, batch, retryPolicyFrom(options.env), (attempt, problem, delayMs) =>
      options.log(`upload attempt ${attempt} failed (${problem}); retrying in ${(delayMs / 1000).toFixed(1)} s`),
    );
    return { kind: "delivered", result };
  } catch (error) {
    if (error instanceof ApiError) {
      const reason = `the server refused the batch: ${error.message}`;
      if (!options.spoolWhenRejected) return { kind: "rejected", reason, error, spooledDir: null };
      const dir = await keep();
      const spooledDir = error.status === 401 ? dir : await rejectSpooled(root, dir, { status: error.status, code: error.code, message: error.message, server });
      return { kind: "rejected", reason, error, spooledDir };
    }
    const reason = error instanceof ServerUnreachableError || error instanceof WrongServerError ? error.message : `upload failed: ${oneLine(error)}`;
    return { kind: "spooled", reason, dir: await keep(), wrongServer: error instanceof WrongServerError };
  }
}

export function describeDelivered(server: string, result: IngestResultDto): string {
  return result.created
    ? `uploaded batch ${result.batchId} to ${server} (${result.files} file(s))`
    : `batch ${result.batchId} was already on ${server} (same batch key): nothing new stored`;
}
