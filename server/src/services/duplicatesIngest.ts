/**
 * The duplicate-transfer step of an ingest (issue #11), inside its transaction, after the file rows and
 * before the findings: each file's fingerprint is looked up in the index, then added to it, one file after
 * the other, so a copy later in the same batch finds an earlier one too. A match becomes a
 * `possible-duplicate` link (score, offset) and an info finding on the new file naming the other one.
 *
 * Info, not warn: a duplicate is not a fault of the transfer, and many are intended (a re-transfer, an
 * access copy filed in another collection). The finding leaves the verdict the CLI reported, so the batch
 * counts and the CI exit code still agree with the portal, while the finding list, the worst-findings
 * column and the finding filter show it and the file page names the other file.
 */
import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import {
  decodeFingerprint,
  FINGERPRINT_VERSION,
  fingerprintVersionOf,
  type Fingerprint,
} from "@tidemark/shared/fingerprint/index";
import type { FileReport, Finding } from "@tidemark/shared/types/report";
import { unprocessable } from "../errors.ts";
import type { Actor } from "./actor.ts";
import { recordAudit } from "./audit.ts";
import { indexFingerprint, lookupFingerprint, retireEarlierScans, type IndexedMatch } from "./duplicatesIndex.ts";
import { summariseFindings } from "./findingSummary.ts";

/** Links (and findings) per new file, best first: a recording copied a hundred times needs no hundred lines. */
export const MAX_LINKS_PER_FILE = 10;

export interface BatchFile {
  report: FileReport;
  fileResultId: number;
  /** The findings about to be inserted for this file; duplicate findings are appended here. */
  findings: Finding[];
}

export interface DuplicateStats {
  fingerprintsIndexed: number;
  /** Fingerprints of another version (an older or newer CLI): stored nowhere, compared with nothing. */
  fingerprintsSkipped: number;
  /** Earlier scans of the same paths taken out of the index. */
  fingerprintsRetired: number;
  duplicateLinks: number;
}

/** Decodes every fingerprint first, so a damaged one refuses the upload before anything is indexed. */
function readFingerprints(files: BatchFile[]): { fps: (Fingerprint | null)[]; skipped: number } {
  let skipped = 0;
  const fps = files.map(({ report }, index) => {
    const text = report.fingerprint;
    if (text === undefined || text === null) return null;
    try {
      if (fingerprintVersionOf(text) !== FINGERPRINT_VERSION) {
        skipped++;
        return null;
      }
      return decodeFingerprint(text);
    } catch (e) {
      throw unprocessable(`files.${index}.fingerprint (${report.path}): ${(e as Error).message}`, "invalid_fingerprint");
    }
  });
  return { fps, skipped };
}

const formatOffset = (s: number): string => `${s >= 0 ? "+" : "−"}${Math.abs(s).toFixed(2)} s`;

function duplicateFinding(m: IndexedMatch): Finding {
  const where =
    m.offsetSeconds >= 0
      ? `this file starts ${m.offsetSeconds.toFixed(2)} s into it`
      : `it starts ${(-m.offsetSeconds).toFixed(2)} s into this file`;
  return {
    code: "possible-duplicate",
    severity: "info",
    channel: null,
    startSeconds: null,
    endSeconds: null,
    message: `Same recording as "${m.path}" in ${m.collectionName} (file result ${m.fileResultId}, batch ${m.batchId}): score ${m.score}, offset ${formatOffset(m.offsetSeconds)} (${where})`,
  };
}

export async function recordBatchDuplicates(
  sequelize: Sequelize,
  actor: Actor,
  collectionId: number,
  files: BatchFile[],
  transaction: Transaction,
): Promise<DuplicateStats> {
  const { fps, skipped } = readFingerprints(files);
  const stats: DuplicateStats = { fingerprintsIndexed: 0, fingerprintsSkipped: skipped, fingerprintsRetired: 0, duplicateLinks: 0 };
  const withFingerprint = files.filter((_f, i) => fps[i] !== null);
  if (withFingerprint.length === 0) return stats;
  // Before any lookup, so a re-scan is not reported as a copy of its own earlier scan.
  stats.fingerprintsRetired = (await retireEarlierScans(sequelize, collectionId, withFingerprint.map((f) => f.report.path), transaction)).length;

  const changed: BatchFile[] = [];
  for (const [index, file] of files.entries()) {
    const fp = fps[index];
    if (!fp) continue;
    const matches = await lookupFingerprint(sequelize, fp, { limit: MAX_LINKS_PER_FILE, transaction });
    await indexFingerprint(sequelize, file.fileResultId, fp, transaction);
    stats.fingerprintsIndexed++;
    if (matches.length === 0) continue;
    await sequelize.query(
      `insert into duplicate_links (file_result_id, other_file_result_id, score, offset_seconds, fingerprint_version)
       select $1, u.other, u.score, u.offset_seconds, $2 from unnest($3::int[], $4::int[], $5::float8[]) as u(other, score, offset_seconds)`,
      { bind: [file.fileResultId, fp.version, matches.map((m) => m.fileResultId), matches.map((m) => m.score), matches.map((m) => m.offsetSeconds)], transaction },
    );
    for (const m of matches) {
      file.findings.push(duplicateFinding(m));
      await recordAudit(
        actor,
        {
          action: "file.possible_duplicate",
          targetType: "file",
          targetId: file.fileResultId,
          details: { path: file.report.path, otherFileResultId: m.fileResultId, otherPath: m.path, score: m.score, offsetSeconds: m.offsetSeconds },
        },
        transaction,
      );
    }
    stats.duplicateLinks += matches.length;
    changed.push(file);
  }
  // The list columns were written with the report's findings; bring them up to date for the linked files.
  for (const file of changed) {
    await sequelize.query(`update file_results set worst_findings = $2::jsonb, finding_codes = $3::text[] where id = $1`, {
      bind: [file.fileResultId, JSON.stringify(summariseFindings(file.findings)), [...new Set(file.findings.map((f) => f.code))]],
      type: QueryTypes.UPDATE,
      transaction,
    });
  }
  return stats;
}
