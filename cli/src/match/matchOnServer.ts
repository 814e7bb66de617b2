/**
 * `match --server URL`: sends the encoded fingerprint to POST /api/duplicates/lookup (token auth, as
 * upload) through the CLI's one API client, and reads the matches the server's index holds. Any failure
 * exits non-zero (a refused token 5, an unreachable or wrong server 6, another refusal 2), so a script
 * never mistakes an unreachable server for "no match" (exit 1).
 */
import { encodeFingerprint, type Fingerprint } from "@tidemark/shared/fingerprint/index";
import type { FingerprintLookupDto } from "@tidemark/shared/types/api";
import { createApiClient, retryPolicyFrom } from "../api/apiClient.ts";
import { exitErrorFor } from "../api/apiExit.ts";
import { resolveCredentials } from "../config/storedLogin.ts";
import { UsageError } from "../errors.ts";
import type { FoundMatch } from "./formatMatches.ts";

export async function matchOnServer(query: Fingerprint, serverOption: string, env: NodeJS.ProcessEnv, limit: number): Promise<FoundMatch[]> {
  const { server, token } = await resolveCredentials(serverOption, env);
  const api = createApiClient(server, token, retryPolicyFrom(env));
  let answer;
  try {
    answer = await api.request<Partial<FingerprintLookupDto> | null>(`/api/duplicates/lookup?limit=${limit}`, {
      method: "POST",
      contentType: "text/plain",
      body: () => encodeFingerprint(query),
    });
  } catch (error) {
    throw exitErrorFor(error, server, "the lookup");
  }
  const matches = answer.body?.matches;
  if (!Array.isArray(matches)) throw new UsageError(`${server} answered ${answer.status} without a list of matches`);
  return matches.map((m) => ({
    path: m.path,
    score: m.score,
    offsetSeconds: m.offsetSeconds,
    collection: m.collection.name,
    fileResultId: m.fileResultId,
    url: `${server}/files/${m.fileResultId}`,
  }));
}
