/**
 * The CLI as a download: `npm install -g <public URL>/downloads/tidemark.tgz` puts `tidemark` on a studio
 * workstation or ingest server. The tarball is what `npm run pack:cli` wrote (newest version in the folder).
 * It holds no data and no secret, so the download itself needs no sign-in (npm cannot send a session);
 * the description for the portal does.
 */
import { readdirSync, statSync } from "node:fs";
import path from "node:path";
import { Router } from "express";
import type { CliPackageDto } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { HttpError } from "../errors.ts";
import { requirePermission } from "../middleware/auth.ts";

export const CLI_DOWNLOAD_PATH = "/downloads/tidemark.tgz";

interface FoundPackage {
  file: string;
  version: string;
  sizeBytes: number;
}

/** `tidemark-1.2.10.tgz` sorts after `tidemark-1.2.9.tgz`. */
function compareVersions(a: string, b: string): number {
  const pa = a.split(/[.-]/).map((x) => Number(x));
  const pb = b.split(/[.-]/).map((x) => Number(x));
  for (let i = 0; i < Math.max(pa.length, pb.length); i++) {
    const d = (pa[i] ?? 0) - (pb[i] ?? 0);
    if (d !== 0 && Number.isFinite(d)) return d;
  }
  return 0;
}

export function findCliPackage(dir: string | null): FoundPackage | null {
  if (!dir) return null;
  let names: string[];
  try {
    names = readdirSync(dir);
  } catch {
    return null;
  }
  const versions = names.flatMap((n) => {
    const m = /^tidemark-(\d+\.\d+\.\d+(?:-[\w.]+)?)\.tgz$/.exec(n);
    return m ? [{ file: path.join(dir, n), version: m[1] }] : [];
  });
  if (versions.length === 0) return null;
  versions.sort((a, b) => compareVersions(b.version, a.version));
  return { ...versions[0], sizeBytes: statSync(versions[0].file).size };
}

const notOffered = (): HttpError => new HttpError(404, "not_found", "this server offers no CLI package; build one with npm run pack:cli");

/** GET /downloads/tidemark.tgz, mounted outside /api. */
export function cliDownloadRouter(ctx: AppContext): Router {
  const router = Router();
  router.get(CLI_DOWNLOAD_PATH, (_req, res) => {
    const found = findCliPackage(ctx.settings.cliPackageDir);
    if (!found) throw notOffered();
    res.type("application/gzip").set("Cache-Control", "no-cache");
    res.download(found.file, `tidemark-${found.version}.tgz`);
  });
  return router;
}

/** GET /api/cli-package: what the tokens page shows next to a new token. */
export function cliPackageRouter(ctx: AppContext): Router {
  const router = Router();
  router.get("/cli-package", requirePermission("view"), (_req, res) => {
    const found = findCliPackage(ctx.settings.cliPackageDir);
    if (!found) throw notOffered();
    const url = `${ctx.settings.publicUrl.replace(/\/+$/, "")}${CLI_DOWNLOAD_PATH}`;
    const body: CliPackageDto = { version: found.version, sizeBytes: found.sizeBytes, url, installCommand: `npm install -g ${url}` };
    res.json(body);
  });
  return router;
}
