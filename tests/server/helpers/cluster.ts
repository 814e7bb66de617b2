/** A dedicated PostgreSQL cluster for fault tests that stop or restart the database. */
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { findPgBinaries, freePort, startCluster, type PgBinaries, type RunningCluster } from "../../../scripts/lib/postgres.ts";

export interface DedicatedCluster {
  cluster: RunningCluster;
  bins: PgBinaries;
  dir: string;
  dataDir: string;
  restart(): Promise<void>;
  dispose(): Promise<void>;
}

export async function startDedicatedCluster(label: string): Promise<DedicatedCluster> {
  const bins = findPgBinaries();
  if (!bins) throw new Error("PostgreSQL binaries not found (npm test installs them)");
  const dir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), `${label}-`));
  const dataDir = path.join(dir, "pg");
  const port = await freePort();
  const handle: DedicatedCluster = {
    cluster: await startCluster(bins, { dataDir, port, throwaway: true }),
    bins,
    dir,
    dataDir,
    async restart() {
      handle.cluster = await startCluster(bins, { dataDir, port, throwaway: true });
    },
    async dispose() {
      await handle.cluster.stop();
      rmSync(dir, { recursive: true, force: true });
    },
  };
  return handle;
}
