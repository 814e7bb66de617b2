/**
 * `npm run db:migrate [-- down]`: applies pending migrations to DATABASE_URL (or reverts the last one).
 */
import { Sequelize } from "sequelize";
import { createMigrator } from "./migrator.ts";

async function main(): Promise<void> {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error("DATABASE_URL is not set");
  const sequelize = new Sequelize(url, { dialect: "postgres", logging: false });
  try {
    const migrator = createMigrator(sequelize, (line) => console.error(line));
    if (process.argv[2] === "down") await migrator.down();
    else await migrator.up();
    const pending = await migrator.pending();
    console.error(`migrations: ${pending.length} pending`);
  } finally {
    await sequelize.close();
  }
}

main().catch((e: unknown) => {
  console.error(`db:migrate failed: ${e instanceof Error ? e.message : String(e)}`);
  process.exit(1);
});
