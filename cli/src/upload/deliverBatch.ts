/**
 * Delivers a batch, or keeps it: sent when the server takes it, spooled when the server stays
 * unreachable (or, when asked, when it refuses), so no scan result is ever lost to a network.
 */
import { createHash } from "node:crypto";
import type { IngestResultDto } from "@tidemark/shared/types/api";
import { spoolDir } from "../config/userDirs.ts";
import { oneLine } from "../errors.ts";
import { postBatch, retryPolicyFrom, ServerUnreachableError, UploadRejectedError, type IngestBatch } from "./ingestClient.ts";
import { spoolBatch } from "./spool.ts";

export type DeliveryOutcome =
  | { kind: "delivered"; result: IngestResultDto }
  | { kind: "spooled"; reason: string; dir: string }
  | { kind: "rejected"; reason: string; spooledDir: string | null };

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
  const keep = async (): Promise<string> => spoolBatch(spoolDir(options.env), server, batch);
  try {
    const result = await postBatch(server, token, batch, retryPolicyFrom(options.env), (attempt, problem, delayMs) =>
      options.log(`upload attempt ${attempt} failed (${problem}); retrying in ${(delayMs / 1000).toFixed(1)} s`),
    );
    return { kind: "delivered", result };
  } catch (error) {
    if (error instanceof UploadRejectedError) {
      const reason = `the server refused the batch: ${error.message}`;
      return { kind: "rejected", reason, spooledDir: options.spoolWhenRejected ? await keep() : null };
    }
    const reason = error instanceof ServerUnreachableError ? error.message : `upload failed: ${oneLine(error)}`;
    return { kind: "spooled", reason, dir: await keep() };
  }
}

export function describeDelivered(server: string, result: IngestResultDto): string {
  return result.created
    ? `uploaded batch ${result.batchId} to ${server} (${result.files} file(s))`
    : `batch ${result.batchId} was already on ${server} (same batch key): nothing new stored`;
}
