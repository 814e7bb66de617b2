/**
 * Reading duplicate transfers: the stored links of one file, seen from either end, and a lookup of an
 * encoded fingerprint the CLI sends (`tidemark match --server`).
 */
import { QueryTypes, type Sequelize } from "sequelize";
import {
  decodeFingerprint,
  FINGERPRINT_VERSION,
  fingerprintVersionOf,
  type Fingerprint,
} from "@tidemark/shared/fingerprint/index";
import type { DuplicateListDto, DuplicateMatchDto, FingerprintLookupDto } from "@tidemark/shared/types/api";
import { badRequest, HttpError, unprocessable } from "../errors.ts";
import { lookupFingerprint } from "./duplicatesIndex.ts";

interface LinkRow {
  other_id: number;
  batch_id: number;
  collection_id: number;
  collection_name: string;
  path: string;
  duration_seconds: number | null;
  score: number;
  offset_seconds: number;
  created_at: Date;
}

/** Both directions of every link of `fileId`; offsets are always "this file's t = 0 in the other one". */
export async function duplicatesOf(sequelize: Sequelize, fileId: number): Promise<DuplicateListDto> {
  const rows = await sequelize.query<LinkRow>(
    `with l as (
       select other_file_result_id as other_id, score, offset_seconds, created_at from duplicate_links where file_result_id = $1
       union all
       select file_result_id, score, -offset_seconds, created_at from duplicate_links where other_file_result_id = $1
     )
     select l.other_id, f.batch_id, f.collection_id, c.name as collection_name, f.path, f.duration_seconds,
            l.score, l.offset_seconds, l.created_at
       from l join file_results f on f.id = l.other_id join collections c on c.id = f.collection_id
      order by l.score desc, l.other_id`,
    { bind: [fileId], type: QueryTypes.SELECT },
  );
  const [fingerprint] = await sequelize.query<{ version: number }>(`select version from fingerprints where file_result_id = $1`, {
    bind: [fileId],
    type: QueryTypes.SELECT,
  });
  const items: DuplicateMatchDto[] = rows.map((r) => ({
    fileResultId: r.other_id,
    batchId: r.batch_id,
    collection: { id: r.collection_id, name: r.collection_name },
    path: r.path,
    durationSeconds: r.duration_seconds,
    score: r.score,
    offsetSeconds: r.offset_seconds,
    detectedAt: new Date(r.created_at).toISOString(),
  }));
  return { items, hasFingerprint: fingerprint?.version === FINGERPRINT_VERSION };
}

/** A fingerprint sent as text: a clear 400 for damage, 422 for a version this server does not index. */
export function parseEncodedFingerprint(text: unknown): Fingerprint {
  if (typeof text !== "string" || text.trim() === "") {
    throw badRequest("send the encoded fingerprint as the text/plain request body", "invalid_fingerprint");
  }
  const trimmed = text.trim();
  let fp: Fingerprint;
  try {
    const version = fingerprintVersionOf(trimmed);
    if (version !== FINGERPRINT_VERSION) {
      throw unprocessable(
        `fingerprint version ${version}, this server indexes version ${FINGERPRINT_VERSION}: fingerprint the file with a matching tidemark`,
        "fingerprint_version",
      );
    }
    fp = decodeFingerprint(trimmed);
  } catch (e) {
    if (e instanceof HttpError) throw e;
    throw badRequest(`not a fingerprint: ${(e as Error).message}`, "invalid_fingerprint");
  }
  return fp;
}

export async function lookupEncodedFingerprint(sequelize: Sequelize, text: unknown, limit: number): Promise<FingerprintLookupDto> {
  const fp = parseEncodedFingerprint(text);
  const matches = await lookupFingerprint(sequelize, fp, { limit });
  return {
    matches: matches.map((m) => ({
      fileResultId: m.fileResultId,
      batchId: m.batchId,
      collection: { id: m.collectionId, name: m.collectionName },
      path: m.path,
      durationSeconds: m.durationSeconds,
      score: m.score,
      offsetSeconds: m.offsetSeconds,
    })),
  };
}
