/**
 * Inserts many synthetic file results fast (100 k in a few seconds, 1 M in about a minute and a half), for the GET /api/files latency
 * check and `npm run load`. Rows are made inside PostgreSQL from generate_series with a fixed random
 * seed, spread over batches in the invented Harbourside collections, with the list columns ingest
 * would fill (verdict, review state, duration, loudness, true peak, worst findings, finding codes).
 *
 * As a command: `DATABASE_URL=… node --import tsx scripts/seed-bulk.ts [count]` (migrates first).
 */
import { pathToFileURL } from "node:url";
import { QueryTypes, Sequelize } from "sequelize";

export interface BulkSeedOptions {
  files?: number;
  filesPerBatch?: number;
  /** setseed() value in [-1, 1]: the same seed gives the same rows. */
  seed?: number;
}

export interface BulkSeedResult {
  files: number;
  batches: number;
  collectionIds: number[];
  batchIds: number[];
  uploaderId: number;
  ms: number;
}

const COLLECTIONS = ["Ferry Terminal Interviews 1978", "Lighthouse Choir Reels", "Harbour Board Minutes on Dictabelt", "Fish Market Soundwalks 1992"];
// Codes drawn for warn/fail rows, with the severity they carry.
const CODES: [string, "warn" | "fail"][] = [
  ["clipping", "fail"],
  ["true-peak-over", "fail"],
  ["dropout", "fail"],
  ["hum", "warn"],
  ["dc-offset", "warn"],
  ["band-limited", "warn"],
  ["lead-silence", "warn"],
  ["channel-imbalance", "warn"],
  ["padded-bit-depth", "fail"],
  ["loudness-off-target", "warn"],
];

export async function seedBulkFileResults(sequelize: Sequelize, options: BulkSeedOptions = {}): Promise<BulkSeedResult> {
  const files = options.files ?? 100_000;
  const perBatch = options.filesPerBatch ?? 500;
  const batches = Math.ceil(files / perBatch);
  const started = Date.now();
  const q = <T extends object>(sql: string, bind: unknown[] = []) => sequelize.query<T>(sql, { bind, type: QueryTypes.SELECT });

  const result = await sequelize.transaction(async (transaction) => {
    const run = <T extends object>(sql: string, bind: unknown[] = []) => sequelize.query<T>(sql, { bind, type: QueryTypes.SELECT, transaction });
    // A flushed commit lets the VACUUM below mark pages all-visible at once (throwaway clusters commit
    // asynchronously, and hint bits wait for the WAL flush), so index-only scans work as in production.
    await sequelize.query(`set local synchronous_commit = on`, { transaction });
    // The server's connections stop a statement after 60 s; a million rows in one insert may take longer.
    await sequelize.query(`set local statement_timeout = 0`, { transaction });
    await run(`select setseed($1)`, [options.seed ?? 0.42]);
    const [uploader] = await run<{ id: number }>(
      `insert into users (email, name, role, password_hash) values ('bulk.loader@harbourside.test', 'Bulk Loader', 'technician', 'scrypt$disabled')
       on conflict ((lower(email))) do update set name = excluded.name returning id`,
    );
    await run(`insert into collections (name) select unnest($1::text[]) on conflict (name) do nothing`, [COLLECTIONS]);
    const collections = await run<{ id: number }>(`select id from collections where name = any($1::text[]) order by id`, [COLLECTIONS]);
    const collectionIds = collections.map((c) => c.id);
    const made = await run<{ id: number }>(
      `insert into batches (collection_id, uploader_id, batch_key, profile_name, tool_name, tool_version, started_at, finished_at)
       select ($2::int[])[1 + (g % array_length($2::int[], 1))], $3, 'bulk-' || g || '-' || md5(random()::text), 'preservation-master',
              'tidemark', '0.1.0', now() - (($1 - g) || ' hours')::interval, now() - (($1 - g) || ' hours')::interval + interval '40 minutes'
         from generate_series(1, $1) g
       returning id`,
      [batches, collectionIds, uploader.id],
    );
    const batchIds = made.map((b) => b.id).sort((a, b) => a - b);
    // Into an empty table, build the indexes once after the rows (sorted builds) rather than row by row:
    // 1 M rows took 260 s with the covering list indexes maintained on every insert.
    const [{ empty }] = await run<{ empty: boolean }>(`select not exists (select 1 from file_results) as empty`);
    const indexes = empty
      ? await run<{ name: string; def: string }>(
          `select indexname as name, indexdef as def from pg_indexes
            where schemaname = current_schema() and tablename = 'file_results'
              and indexname not in (select conname from pg_constraint where conrelid = 'file_results'::regclass)`,
        )
      : [];
    for (const { name } of indexes) await sequelize.query(`drop index "${name.replace(/"/g, '""')}"`, { transaction });
    await run(
      `with r as (
         select g, random() as rv, random() as rr, random() as rl, random() as rp, random() as rd,
                floor(random() * $4)::int + 1 as c1, floor(random() * $4)::int + 1 as c2
           from generate_series(0, $1 - 1) g
       ), v as (
         select r.*, ($2::int[])[1 + g / $3] as batch_id,
                case when rv < 0.6 then 'pass' when rv < 0.8 then 'warn' when rv < 0.95 then 'fail' else 'error' end as verdict
           from r
       ), c as (
         select v.*, ($5::text[])[c1] as code1, ($6::text[])[c1] as sev1, ($5::text[])[c2] as code2, ($6::text[])[c2] as sev2 from v
       )
       insert into file_results (batch_id, collection_id, path, size_bytes, sha256, format, metadata, metrics, error, verdict, review_state,
                                 duration_seconds, integrated_lufs, true_peak_dbtp, worst_findings, finding_codes, created_at)
       select c.batch_id, b.collection_id,
              'reel-' || lpad((c.g / 40)::text, 5, '0') || '/take-' || lpad((c.g % 40)::text, 2, '0') || '.wav',
              (rd * 4e9)::bigint, md5(c.g::text) || md5((c.g + 1)::text),
              case when c.verdict = 'error' then null else jsonb_build_object('container', 'bwf', 'encoding', 'pcm', 'sampleRateHz', 96000,
                   'bitDepth', 24, 'channels', 2, 'durationSeconds', round((60 + rd * 10740)::numeric, 3)) end,
              '{}'::jsonb, null,
              case when c.verdict = 'error' then jsonb_build_object('code', 'truncated', 'message', 'data chunk ends early') end,
              c.verdict::verdict,
              (case when rr < 0.7 then 'pending' when rr < 0.85 then 'accepted' when rr < 0.95 then 'flagged' else 'retransfer' end)::review_state,
              case when c.verdict = 'error' then null else round((60 + rd * 10740)::numeric, 3) end,
              case when c.verdict = 'error' or rl < 0.03 then null else round((-40 + rl * 30)::numeric, 2) end,
              case when c.verdict = 'error' or rl < 0.03 then null else round((-12 + rp * 13)::numeric, 2) end,
              case c.verdict
                when 'warn' then jsonb_build_array(jsonb_build_object('code', c.code1, 'severity', 'warn', 'count', 1 + (c.g % 3)))
                when 'fail' then jsonb_build_array(jsonb_build_object('code', c.code1, 'severity', c.sev1, 'count', 1 + (c.g % 5)),
                                                   jsonb_build_object('code', c.code2, 'severity', 'warn', 'count', 1))
                else '[]'::jsonb end,
              case c.verdict when 'warn' then array[c.code1] when 'fail' then array[c.code1, c.code2] else '{}'::text[] end,
              b.started_at
         from c join batches b on b.id = c.batch_id`,
      [files, batchIds, perBatch, CODES.length, CODES.map((c) => c[0]), CODES.map((c) => c[1])],
    );
    if (indexes.length) await sequelize.query(`set local maintenance_work_mem = '256MB'`, { transaction });
    for (const { def } of indexes) await sequelize.query(def, { transaction });
    await run(
      `insert into findings (file_result_id, code, severity, channel, start_seconds, end_seconds, message)
       select f.id, w->>'code', (w->>'severity')::finding_severity, 0, 12.5, 13.0, 'synthetic ' || (w->>'code')
         from file_results f cross join lateral jsonb_array_elements(f.worst_findings) w
        where f.batch_id = any($1::int[])`,
      [batchIds],
    );
    await run(
      `update batches b set file_count = s.n, pass_count = s.pass, warn_count = s.warn, fail_count = s.fail, error_count = s.error
         from (select batch_id, count(*) n, count(*) filter (where verdict = 'pass') pass, count(*) filter (where verdict = 'warn') warn,
                      count(*) filter (where verdict = 'fail') fail, count(*) filter (where verdict = 'error') error
                 from file_results where batch_id = any($1::int[]) group by batch_id) s
        where b.id = s.batch_id`,
      [batchIds],
    );
    return { collectionIds, batchIds, uploaderId: uploader.id };
  });
  // Fresh statistics and visibility map, as autovacuum would have after a while.
  await q(`vacuum analyze file_results`);
  await q(`vacuum analyze batches`);
  await q(`vacuum analyze findings`);
  return { files, batches, ...result, ms: Date.now() - started };
}

async function main(): Promise<void> {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error("DATABASE_URL is not set");
  const count = Number(process.argv[2] ?? 100_000);
  const sequelize = new Sequelize(url, { dialect: "postgres", logging: false });
  try {
    const { migrateUp } = await import("../server/src/db/migrator.ts");
    await migrateUp(sequelize);
    const result = await seedBulkFileResults(sequelize, { files: count });
    console.error(`seeded ${result.files} file results in ${result.batches} batches in ${result.ms} ms`);
  } finally {
    await sequelize.close();
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? "").href) {
  main().catch((e: unknown) => {
    console.error(`seed-bulk failed: ${e instanceof Error ? e.message : String(e)}`);
    process.exit(1);
  });
}
