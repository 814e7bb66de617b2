import type { Migration } from "../server/src/db/migrator.ts";

// Duplicate transfers (issue #11). fingerprints: which file results brought a fingerprint, and how many
// hashes (the shared-fraction rule needs the shorter file's count). fingerprint_hashes: the index, one row
// per landmark hash, looked up by the btree on (version, hash); it INCLUDEs the two other columns so a
// lookup is an index-only scan. Only the latest scan of a (collection, path) keeps its rows: a re-scan
// replaces them, so an archive scanned every month does not grow the index every month.
// duplicate_links: one row per pair, written when the later file was ingested; offset_seconds is where
// file_result_id's t = 0 falls in other_file_result_id (seen from the other file it is negated).
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`create table fingerprints (
      file_result_id integer primary key references file_results(id) on delete cascade,
      version integer not null check (version >= 1),
      hash_count integer not null check (hash_count >= 0),
      duration_seconds double precision not null,
      is_indexed boolean not null default true,
      created_at timestamptz not null default now()
    )`);
    // No foreign key: its per-row check would dominate inserting a long file's 10^5 rows. Ingest writes
    // the fingerprints row first in the same transaction, and the trigger below deletes with it.
    await q(`create table fingerprint_hashes (
      file_result_id integer not null,
      version smallint not null,
      hash integer not null,
      time_seconds real not null
    )`);
    await q(`create index fingerprint_hashes_hash_idx on fingerprint_hashes (version, hash) include (file_result_id, time_seconds)`);
    // For the delete trigger and for dropping a superseded scan's rows.
    await q(`create index fingerprint_hashes_file_idx on fingerprint_hashes (file_result_id)`);
    await q(`create function delete_fingerprint_hashes() returns trigger language plpgsql as $$
      begin
        delete from fingerprint_hashes where file_result_id = old.file_result_id;
        return null;
      end
    $$`);
    await q(`create trigger fingerprints_delete_hashes after delete on fingerprints
      for each row execute function delete_fingerprint_hashes()`);
    await q(`create table duplicate_links (
      id serial primary key,
      file_result_id integer not null references file_results(id) on delete cascade,
      other_file_result_id integer not null references file_results(id) on delete cascade,
      score integer not null check (score > 0),
      offset_seconds double precision not null,
      fingerprint_version integer not null,
      created_at timestamptz not null default now(),
      unique (file_result_id, other_file_result_id),
      check (file_result_id <> other_file_result_id)
    )`);
    await q(`create index duplicate_links_other_idx on duplicate_links (other_file_result_id)`);
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    const q = (sql: string) => sequelize.query(sql, { transaction });
    await q(`drop table duplicate_links`);
    await q(`drop trigger fingerprints_delete_hashes on fingerprints`);
    await q(`drop function delete_fingerprint_hashes()`);
    await q(`drop table fingerprint_hashes`);
    await q(`drop table fingerprints`);
  });
};
