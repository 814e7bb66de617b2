/** Every migration applies, reverts and re-applies cleanly, and `npm run db:migrate` runs them. */
import { execa } from "execa";
import { Sequelize } from "sequelize";
import { afterAll, beforeAll, expect, it } from "vitest";
import { projectRoot } from "../../scripts/lib/paths.ts";
import { createMigrator } from "../../server/src/db/migrator.ts";
import { createTestDatabase, type TestDatabase } from "../helpers/db.ts";

let db: TestDatabase;
let sequelize: Sequelize;

beforeAll(async () => {
  db = await createTestDatabase("migrations");
  sequelize = new Sequelize(db.url, { dialect: "postgres", logging: false });
});
afterAll(async () => {
  await sequelize.close();
  await db.drop();
});

const tables = async (): Promise<string[]> =>
  ((await sequelize.query(`select tablename from pg_tables where schemaname = 'public' order by 1`))[0] as { tablename: string }[]).map((r) => r.tablename);

it("goes up through the CLI entry, all the way down, and up again", async () => {
  const run = await execa("npm", ["run", "--silent", "db:migrate"], { cwd: projectRoot, env: { DATABASE_URL: db.url }, reject: false });
  expect(run.exitCode, run.stderr).toBe(0);
  expect(run.stderr).toContain("0 pending");
  const all = await tables();
  expect(all).toEqual(expect.arrayContaining(["users", "sessions", "api_tokens", "collections", "batches", "file_results", "findings", "comments", "review_events", "audit_log", "password_resets", "file_list_version", "SequelizeMeta"]));

  const migrator = createMigrator(sequelize);
  const applied = await migrator.executed();
  await migrator.down({ to: 0 });
  expect(await tables()).toEqual(["SequelizeMeta"]);
  await migrator.up();
  expect((await migrator.executed()).map((m) => m.name)).toEqual(applied.map((m) => m.name));
  expect(await tables()).toEqual(all);
});
