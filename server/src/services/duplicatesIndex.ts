/**
 * The fingerprint hash index in PostgreSQL (migrations/2026.12.02T12.00.00.create-fingerprints.ts):
 * adding a file's hashes, retiring superseded scans, and finding the files that share a fingerprint's
 * audio, scored by the shared offset histogram (scorePostings) and judged by the shared rule
 * (isSameRecording), so the CLI's in-memory index and the server agree on what a match is.
 */
import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import {
  DEFAULT_MIN_SCORE,
  isSameRecording,
  OFFSET_BIN_SECONDS,
  scorePostings,
  type Fingerprint,
} from "@tidemark/shared/fingerprint/index";

/** Hashes found in more rows than this are skipped (steady tones, test signals), as the in-memory index does. */
export const MAX_ROWS_PER_HASH = 2000;
/** Candidates whose file details are read after scoring; more only means weaker ones. */
const MAX_SCORED_CANDIDATES = 200;
const INSERT_CHUNK = 200_000;

export interface IndexedMatch {
  fileResultId: number;
  batchId: number;
  collectionId: number;
  collectionName: string;
  path: string;
  durationSeconds: number | null;
  hashCount: number;
  score: number;
  /** Where the query's t = 0 falls in this file, seconds. */
  offsetSeconds: number;
}

export interface LookupOptions {
  transaction?: Transaction;
  /** At most this many matches, best first. */
  limit: number;
  minScore?: number;
}

interface PostingRow {
  hash: number;
  file_result_id: number;
  time_seconds: number;
}

interface CandidateRow {
  id: number;
  batch_id: number;
  collection_id: number;
  collection_name: string;
  path: string;
  duration_seconds: number | null;
  hash_count: number;
}

/**
 * The postings of a lookup. PostgreSQL probes the btree once per distinct hash (LIMIT bounds what a very common
 * hash costs), drops hashes over MAX_ROWS_PER_HASH, and returns only the rows of files that can still
 * reach minScore: a window of three offset bins holding minScore hits has a bin holding a third of
 * them, so files with no bin of ⌈minScore/3⌉ hits are left out. The bins are computed as the scorer
 * computes them (floor(x + 0.5) is Math.round, on the same doubles), so this changes which rows travel,
 * not the result; chance hits, spread over thousands of files, stay in the database.
 */
const POSTINGS_SQL = `
  with d as (
    select distinct hash from unnest($2::int[]) as u(hash)
  ), r as materialized (
    select d.hash, h.file_result_id, h.time_seconds, count(*) over (partition by d.hash) as n
      from d cross join lateral (
        select file_result_id, time_seconds from fingerprint_hashes
         where version = $1::smallint and hash = d.hash
         limit $4
      ) h
  ), candidates as (
    select r.file_result_id
      from r join unnest($2::int[], $3::float8[]) as q(hash, t) on q.hash = r.hash
     where r.n < $4
     group by r.file_result_id, floor((r.time_seconds - q.t) / $5 + 0.5)
    having count(*) >= $6
  )
  select r.hash, r.file_result_id, r.time_seconds from r
   where r.n < $4 and r.file_result_id in (select file_result_id from candidates)`;

/** Files of the index holding the query's audio, best first. An empty fingerprint matches nothing. */
export async function lookupFingerprint(sequelize: Sequelize, fp: Fingerprint, o: LookupOptions): Promise<IndexedMatch[]> {
  if (fp.hashes.length === 0) return [];
  const minScore = o.minScore ?? DEFAULT_MIN_SCORE;
  const kept = await sequelize.query<PostingRow>(POSTINGS_SQL, {
    bind: [fp.version, Array.from(fp.hashes), Array.from(fp.times), MAX_ROWS_PER_HASH + 1, OFFSET_BIN_SECONDS, Math.ceil(minScore / 3)],
    type: QueryTypes.SELECT,
    transaction: o.transaction,
  });
  const fileIds: number[] = [];
  const dense = new Map<number, number>();
  const postings = { hashes: new Uint32Array(kept.length), candidates: new Uint32Array(kept.length), times: new Float64Array(kept.length), count: kept.length };
  kept.forEach((r, i) => {
    let n = dense.get(r.file_result_id);
    if (n === undefined) {
      n = fileIds.length;
      dense.set(r.file_result_id, n);
      fileIds.push(r.file_result_id);
    }
    postings.hashes[i] = r.hash;
    postings.candidates[i] = n;
    // A real arrives as its shortest decimal text, which parses to a nearby double; fround gives back
    // the stored float4 the SQL above computed with.
    postings.times[i] = Math.fround(r.time_seconds);
  });
  const scored = scorePostings(fp, postings, { minScore, maxResults: MAX_SCORED_CANDIDATES });
  if (scored.length === 0) return [];

  const details = await sequelize.query<CandidateRow>(
    `select f.id, f.batch_id, f.collection_id, c.name as collection_name, f.path, f.duration_seconds, p.hash_count
       from file_results f
       join collections c on c.id = f.collection_id
       join fingerprints p on p.file_result_id = f.id
      where f.id = any($1::int[])`,
    { bind: [scored.map((s) => fileIds[s.candidate])], type: QueryTypes.SELECT, transaction: o.transaction },
  );
  const byId = new Map(details.map((d) => [d.id, d]));
  const matches: IndexedMatch[] = [];
  for (const s of scored) {
    const d = byId.get(fileIds[s.candidate]);
    if (!d || !isSameRecording(s.score, fp.hashes.length, d.hash_count, minScore)) continue;
    matches.push({
      fileResultId: d.id,
      batchId: d.batch_id,
      collectionId: d.collection_id,
      collectionName: d.collection_name,
      path: d.path,
      durationSeconds: d.duration_seconds,
      hashCount: d.hash_count,
      score: s.score,
      offsetSeconds: s.offsetSeconds,
    });
    if (matches.length === o.limit) break;
  }
  return matches;
}

/** Records a file's fingerprint and adds its hashes to the index. */
export async function indexFingerprint(sequelize: Sequelize, fileResultId: number, fp: Fingerprint, transaction: Transaction): Promise<void> {
  await sequelize.query(
    `insert into fingerprints (file_result_id, version, hash_count, duration_seconds) values ($1, $2, $3, $4)`,
    { bind: [fileResultId, fp.version, fp.hashes.length, fp.durationSeconds], transaction },
  );
  for (let start = 0; start < fp.hashes.length; start += INSERT_CHUNK) {
    const end = Math.min(fp.hashes.length, start + INSERT_CHUNK);
    await sequelize.query(
      `insert into fingerprint_hashes (file_result_id, version, hash, time_seconds)
       select $1, $2::smallint, u.hash, u.t from unnest($3::int[], $4::real[]) as u(hash, t)`,
      { bind: [fileResultId, fp.version, Array.from(fp.hashes.subarray(start, end)), Array.from(fp.times.subarray(start, end))], transaction },
    );
  }
}

/**
 * Takes earlier scans of these paths in the collection out of the index (their fingerprint rows stay,
 * marked not indexed): the new scan stands for the recording now. Returns the retired file ids.
 */
export async function retireEarlierScans(sequelize: Sequelize, collectionId: number, paths: string[], transaction: Transaction): Promise<number[]> {
  if (paths.length === 0) return [];
  const retired = await sequelize.query<{ file_result_id: number }>(
    `update fingerprints p set is_indexed = false
       from file_results f
      where f.id = p.file_result_id and p.is_indexed and f.collection_id = $1 and f.path = any($2::text[])
      returning p.file_result_id`,
    { bind: [collectionId, paths], type: QueryTypes.SELECT, transaction },
  );
  const ids = retired.map((r) => r.file_result_id);
  if (ids.length) await sequelize.query(`delete from fingerprint_hashes where file_result_id = any($1::int[])`, { bind: [ids], transaction });
  return ids;
}
