/**
 * The server's two connection pools to one database: Sequelize for the models, and a small pg.Pool for
 * the session store (connect-pg-simple wants a plain pool).
 */
import pg from "pg";
import { Sequelize } from "sequelize";

export interface Database {
  sequelize: Sequelize;
  sessionPool: pg.Pool;
  close(): Promise<void>;
}

export interface DatabaseOptions {
  poolMax?: number;
  /** Called when an idle connection dies (e.g. PostgreSQL restarted); the pools replace it themselves. */
  onIdleError?: (err: Error) => void;
}

export function connectDatabase(url: string, options: DatabaseOptions = {}): Database {
  const sequelize = new Sequelize(url, {
    dialect: "postgres",
    logging: false,
    // Fail fast while the database is away instead of queueing requests for a minute.
    pool: { max: options.poolMax ?? 10, min: 0, acquire: 5_000, idle: 10_000, evict: 5_000 },
    // JIT off: list pages are short indexed queries; above jit_above_cost PostgreSQL would spend ~0.3 s
    // compiling one (measured at 1 M rows), far more than the query itself.
    dialectOptions: { application_name: "tidemark-server", connectionTimeoutMillis: 3_000, statement_timeout: 60_000, options: "-c jit=off" },
    define: { underscored: true },
  });
  // Every cookie-authenticated request reads its session here first: as wide as the main pool.
  const sessionPool = new pg.Pool({
    connectionString: url,
    max: options.poolMax ?? 10,
    connectionTimeoutMillis: 3_000,
    application_name: "tidemark-sessions",
  });
  // Without a listener an idle client's error (server restart) would crash the process.
  sessionPool.on("error", (err) => options.onIdleError?.(err));
  return {
    sequelize,
    sessionPool,
    async close() {
      await Promise.allSettled([sequelize.close(), sessionPool.end()]);
    },
  };
}
