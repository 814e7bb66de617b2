/**
 * `match --server URL`: sends the encoded fingerprint to POST /api/duplicates/lookup (token auth, as
 * upload) and reads the matches the server's index holds. Any failure is a UsageError (exit 2), so a
 * script never mistakes an unreachable server for "no match" (exit 1).
 */
import { encodeFingerprint, type Fingerprint } from "@tidemark/shared/fingerprint/index";
import type { ApiErrorBody, FingerprintLookupDto } from "@tidemark/shared/types/api";
import { resolveCredentials } from "../config/storedLogin.ts";
import { UsageError } from "../errors.ts";
import type { FoundMatch } from "./formatMatches.ts";

const TIMEOUT_MS = 60_000;

function describeNetworkError(error: unknown): string {
  const cause = (error as { cause?: { code?: string; message?: string } } | null)?.cause;
  if (cause?.code) return cause.code;
  if (cause?.message) return cause.message;
  if (error instanceof Error && error.name === "TimeoutError") return "timed out";
  return error instanceof Error ? error.message : String(error);
}

export async function matchOnServer(query: Fingerprint, serverOption: string, env: NodeJS.ProcessEnv, limit: number): Promise<FoundMatch[]> {
  const { server, token } = await resolveCredentials(serverOption, env);
  let response: Response;
  try {
    response = await fetch(`${server}/api/duplicates/lookup?limit=${limit}`, {
      method: "POST",
      headers: { authorization: `Bearer ${token}`, "content-type": "text/plain", accept: "application/json" },
      body: encodeFingerprint(query),
      signal: AbortSignal.timeout(TIMEOUT_MS),
    });
  } catch (error) {
    throw new UsageError(`no answer from ${server}: ${describeNetworkError(error)}`);
  }
  const text = await response.text().catch(() => "");
  let body: unknown = null;
  try {
    body = JSON.parse(text);
  } catch {
    // Reported below with the status.
  }
  if (!response.ok) {
    const error = (body as Partial<ApiErrorBody> | null)?.error;
    const detail = error?.message ? `${error.message} (${error.code ?? response.status})` : `HTTP ${response.status}`;
    throw new UsageError(`${server} refused the lookup: ${detail}`);
  }
  const matches = (body as Partial<FingerprintLookupDto> | null)?.matches;
  if (!Array.isArray(matches)) throw new UsageError(`${server} answered ${response.status} without a list of matches`);
  return matches.map((m) => ({
    path: m.path,
    score: m.score,
    offsetSeconds: m.offsetSeconds,
    collection: m.collection.name,
    fileResultId: m.fileResultId,
    url: `${server}/files/${m.fileResultId}`,
  }));
}
