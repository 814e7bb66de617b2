/**
 * `match --against REPORT.json`: the fingerprints carried in earlier reports go into the shared
 * in-memory index, and the query is scored and judged as the server would (isSameRecording).
 */
import {
  createFingerprintIndex,
  decodeFingerprint,
  DEFAULT_MIN_SCORE,
  FINGERPRINT_VERSION,
  fingerprintVersionOf,
  isSameRecording,
  type Fingerprint,
} from "@tidemark/shared/fingerprint/index";
import { readReport } from "../commands/verify.ts";
import { UsageError } from "../errors.ts";
import type { FoundMatch } from "./formatMatches.ts";

export interface ReportMatches {
  matches: FoundMatch[];
  /** Report files compared, and those skipped for lack of a fingerprint of this version. */
  compared: number;
  withoutFingerprint: number;
  otherVersion: number;
}

export async function matchAgainstReports(query: Fingerprint, reportPaths: string[], cwd: string, limit: number): Promise<ReportMatches> {
  const index = createFingerprintIndex();
  const entries = new Map<string, { path: string; hashes: number }>();
  let withoutFingerprint = 0;
  let otherVersion = 0;
  for (const [r, reportPath] of reportPaths.entries()) {
    const { report } = await readReport(reportPath, cwd);
    for (const [i, file] of report.files.entries()) {
      const text = file.fingerprint;
      if (text === undefined || text === null) {
        withoutFingerprint++;
        continue;
      }
      let fp: Fingerprint;
      try {
        if (fingerprintVersionOf(text) !== FINGERPRINT_VERSION) {
          otherVersion++;
          continue;
        }
        fp = decodeFingerprint(text);
      } catch (error) {
        throw new UsageError(`${reportPath}: files.${i}.fingerprint (${file.path}): ${(error as Error).message}`);
      }
      // Several reports may name the same path: key by report too; show the report only when there are several.
      const id = `${r}\n${file.path}`;
      index.add(id, fp);
      entries.set(id, { path: reportPaths.length > 1 ? `${reportPath}: ${file.path}` : file.path, hashes: fp.hashes.length });
    }
  }
  if (index.files === 0) {
    throw new UsageError(
      `no file in ${reportPaths.join(", ")} carries a fingerprint of version ${FINGERPRINT_VERSION}: scan the recordings with this tidemark first`,
    );
  }
  const matches: FoundMatch[] = [];
  for (const m of index.lookup(query, { minScore: DEFAULT_MIN_SCORE })) {
    const entry = entries.get(m.id)!;
    if (!isSameRecording(m.score, query.hashes.length, entry.hashes)) continue;
    matches.push({ path: entry.path, score: m.score, offsetSeconds: m.offsetSeconds });
    if (matches.length === limit) break;
  }
  return { matches, compared: index.files, withoutFingerprint, otherVersion };
}
