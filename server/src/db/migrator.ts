/**
 * Schema migrations: umzug with its Sequelize storage (applied names are kept in "SequelizeMeta").
 * Migration files live in the top-level migrations/ folder, one `up` and `down` each.
 */
import path from "node:path";
import { pathToFileURL } from "node:url";
import type { Sequelize } from "sequelize";
import { SequelizeStorage, Umzug, type MigrationFn } from "umzug";
import { projectRoot } from "../paths.ts";

export interface MigrationContext {
  sequelize: Sequelize;
}

export type Migration = MigrationFn<MigrationContext>;

interface MigrationModule {
  up: Migration;
  down: Migration;
}

export function createMigrator(sequelize: Sequelize, log?: (line: string) => void): Umzug<MigrationContext> {
  return new Umzug<MigrationContext>({
    migrations: {
      glob: ["migrations/*.ts", { cwd: projectRoot, ignore: "migrations/*.d.ts" }],
      // The default resolver uses require(); our migrations are ES modules run through tsx.
      resolve: ({ name, path: file, context }) => {
        const load = async (): Promise<MigrationModule> =>
          (await import(pathToFileURL(path.resolve(projectRoot, file ?? name)).href)) as MigrationModule;
        return {
          name,
          path: file,
          up: async () => (await load()).up({ name, path: file, context }),
          down: async () => (await load()).down({ name, path: file, context }),
        };
      },
    },
    context: { sequelize },
    // Named explicitly: a Sequelize instance with `underscored` would otherwise look for "sequelize_meta".
    storage: new SequelizeStorage({ sequelize, tableName: "SequelizeMeta" }),
    logger: log
      ? {
          info: (m) => log(`migrations: ${String(m.event ?? "")} ${String(m.name ?? "")}`.trim()),
          warn: (m) => log(`migrations: ${JSON.stringify(m)}`),
          error: (m) => log(`migrations: ${JSON.stringify(m)}`),
          debug: () => undefined,
        }
      : undefined,
  });
}

/** Applies every pending migration; returns their names. */
export async function migrateUp(sequelize: Sequelize, log?: (line: string) => void): Promise<string[]> {
  const applied = await createMigrator(sequelize, log).up();
  return applied.map((m) => m.name);
}
