/**
 * Bulk inserts for ingest. The rows travel as ONE jsonb bind parameter that PostgreSQL unpacks with
 * jsonb_to_recordset: parameterised, and several times faster than per-row model instances
 * (6000 files: about 0.4 s instead of 3.5 s on the 2-core test machine).
 */
import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import type { FindingSummaryDto } from "@tidemark/shared/types/api";
import type { AudioFormat, FileMetadata, FileMetrics, FileReport, Finding, ReportError, Verdict } from "@tidemark/shared/types/report";
import type { StoredCloseup, StoredCloseupOmitted } from "../models/FileResult.ts";
import type { FileArtefactLinks } from "./artefacts.ts";
import { summariseFindings } from "./findingSummary.ts";

export interface FileRow {
  previous_id: number | null;
  path: string;
  path_bytes: string | null;
  size_bytes: number;
  sha256: string | null;
  format: AudioFormat | null;
  metadata: FileMetadata;
  metrics: FileMetrics | null;
  error: ReportError | null;
  verdict: Verdict;
  duration_seconds: number | null;
  integrated_lufs: number | null;
  true_peak_dbtp: number | null;
  worst_findings: FindingSummaryDto[];
  finding_codes: string[];
  spectrogram_key: string | null;
  waveform_key: string | null;
  level_grid_key: string | null;
  loudness_curve_key: string | null;
  closeups: StoredCloseup[];
  closeups_omitted: StoredCloseupOmitted[];
  artefact_keys: string[];
}

/**
 * The row of one report entry, judged: the list columns (duration, loudness, true peak, worst findings,
 * finding codes) are copied out of the report here, for both the batch upload and a worker's result.
 */
export function fileRowOf(
  file: FileReport,
  judged: { findings: Finding[]; verdict: Verdict },
  links: { previousId: number | null } & FileArtefactLinks,
): FileRow {
  const { findings, verdict } = judged;
  return {
    previous_id: links.previousId,
    path: file.path,
    path_bytes: file.pathBytes ?? null,
    size_bytes: file.sizeBytes,
    sha256: file.sha256,
    format: file.format,
    metadata: file.metadata,
    metrics: file.metrics,
    error: file.error,
    verdict,
    duration_seconds: file.format?.durationSeconds ?? null,
    integrated_lufs: file.metrics?.integratedLufs ?? null,
    true_peak_dbtp: file.metrics?.truePeakDbtp ?? null,
    worst_findings: summariseFindings(findings),
    finding_codes: [...new Set(findings.map((f) => f.code))],
    spectrogram_key: links.spectrogramKey,
    waveform_key: links.waveformKey,
    level_grid_key: links.levelGridKey,
    loudness_curve_key: links.loudnessCurveKey,
    closeups: links.closeups,
    closeups_omitted: links.closeupsOmitted,
    artefact_keys: links.artefactKeys,
  };
}

const CHUNK = 5000;

/** One file's identity in a collection: its path, and its exact bytes when the name is not UTF-8. */
export function pathKey(path: string, pathBytes: string | null | undefined): string {
  return pathBytes ? `${path}\u0000${pathBytes}` : path;
}

/** Inserts the batch's file rows; returns their ids in the order given. */
export async function insertFileRows(sequelize: Sequelize, batchId: number, collectionId: number, rows: FileRow[], transaction: Transaction): Promise<number[]> {
  const ids: number[] = [];
  for (let start = 0; start < rows.length; start += CHUNK) {
    const chunk = rows.slice(start, start + CHUNK);
    const made = await sequelize.query<{ id: number; path: string; path_bytes: string | null }>(
      `insert into file_results (batch_id, collection_id, previous_id, path, path_bytes, size_bytes, sha256, format, metadata, metrics, error,
                                 verdict, duration_seconds, integrated_lufs, true_peak_dbtp, worst_findings, finding_codes,
                                 spectrogram_key, waveform_key, level_grid_key, loudness_curve_key, closeups, closeups_omitted,
                                 artefact_keys)
       select $1, $2, r.previous_id, r.path, r.path_bytes, r.size_bytes, r.sha256, r.format, r.metadata, r.metrics, r.error,
              r.verdict::verdict, r.duration_seconds, r.integrated_lufs, r.true_peak_dbtp, r.worst_findings,
              array(select jsonb_array_elements_text(r.finding_codes)), r.spectrogram_key, r.waveform_key,
              r.level_grid_key, r.loudness_curve_key, r.closeups, r.closeups_omitted,
              array(select jsonb_array_elements_text(r.artefact_keys))
         from jsonb_to_recordset($3::jsonb) as r(
              previous_id integer, path text, path_bytes text, size_bytes bigint, sha256 text, format jsonb, metadata jsonb, metrics jsonb,
              error jsonb, verdict text, duration_seconds double precision, integrated_lufs double precision,
              true_peak_dbtp double precision, worst_findings jsonb, finding_codes jsonb, spectrogram_key text, waveform_key text,
              level_grid_key text, loudness_curve_key text, closeups jsonb, closeups_omitted jsonb, artefact_keys jsonb)
       returning id, path, path_bytes`,
      { bind: [batchId, collectionId, JSON.stringify(chunk)], type: QueryTypes.SELECT, transaction },
    );
    // Match by path and exact bytes (unique within a batch: two look-alike names differ in path_bytes)
    // rather than trusting RETURNING order.
    const byPath = new Map(made.map((m) => [pathKey(m.path, m.path_bytes), m.id]));
    for (const row of chunk) ids.push(byPath.get(pathKey(row.path, row.path_bytes))!);
  }
  return ids;
}

export async function insertFindingRows(sequelize: Sequelize, rows: (Finding & { file_result_id: number })[], transaction: Transaction): Promise<void> {
  for (let start = 0; start < rows.length; start += CHUNK * 2) {
    await sequelize.query(
      `insert into findings (file_result_id, code, severity, channel, start_seconds, end_seconds, message)
       select r.file_result_id, r.code, r.severity::finding_severity, r.channel, r."startSeconds", r."endSeconds", r.message
         from jsonb_to_recordset($1::jsonb) as r(file_result_id integer, code text, severity text, channel integer,
              "startSeconds" double precision, "endSeconds" double precision, message text)`,
      { bind: [JSON.stringify(rows.slice(start, start + CHUNK * 2))], transaction },
    );
  }
}
