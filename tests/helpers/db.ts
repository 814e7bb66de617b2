/**
 * Per-test-file databases in the throwaway cluster that `npm test` starts (scripts/run-tests.ts).
 * Each file gets its own database, so test files run in parallel without sharing state.
 */
import { randomBytes } from "node:crypto";
import pg from "pg";

export function adminUrl(): string {
  const url = process.env.TIDEMARK_TEST_PG_URL;
  if (!url) {
    throw new Error(
      "TIDEMARK_TEST_PG_URL is not set: run database tests through `npm test -- <files>`, which starts a throwaway PostgreSQL",
    );
  }
  return url;
}

export interface TestDatabase {
  url: string;
  name: string;
  drop(): Promise<void>;
}

export async function createTestDatabase(label = "t"): Promise<TestDatabase> {
  const admin = adminUrl();
  const name = `${label.replace(/[^a-z0-9_]/gi, "_").toLowerCase()}_${randomBytes(5).toString("hex")}`;
  const client = new pg.Client({ connectionString: admin });
  await client.connect();
  await client.query(`create database "${name}"`);
  await client.end();
  const u = new URL(admin);
  u.pathname = `/${name}`;
  return {
    url: u.toString(),
    name,
    async drop() {
      const c = new pg.Client({ connectionString: admin });
      await c.connect();
      await c.query(`drop database if exists "${name}" with (force)`);
      await c.end();
    },
  };
}
