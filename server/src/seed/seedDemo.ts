/**
 * The demo seed, run once on an empty database: the four Harbourside users, then one batch per demo
 * collection made by really running `tidemark scan --upload` on the synthesised archive (examples/audio),
 * ingested through /api/ingest with the technician's token; then a few comments and review changes
 * through the API as the supervisor and the technician would make them.
 */
import { spawn } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { CSRF_HEADER, type FileSummaryDto, type Page } from "@tidemark/shared/types/api";
import { AuditEntry, Batch, User } from "../models/index.ts";
import { projectRoot } from "../paths.ts";
import { createApiToken } from "../services/apiTokens.ts";
import { DEFAULT_SCRYPT_COST, type ScryptCost } from "../services/passwords.ts";
import { DEFAULT_DEMO_PASSWORD, DEMO_COLLECTIONS, createDemoUsers } from "./demoUsers.ts";
import { runCli } from "./runCli.ts";

export interface SeedDemoOptions {
  /** Where the running server answers (the CLI uploads there). */
  baseUrl: string;
  password?: string;
  /** Folder with one sub-folder per collection (default examples/audio/archive); made by examples/make-demo-archive.ts when missing. */
  archiveDir?: string;
  passwordCost?: ScryptCost;
  log?: (line: string) => void;
}

export interface SeedDemoResult {
  seeded: boolean;
  batchIds: number[];
}

const ARCHIVE_SCRIPT = path.join(projectRoot, "examples", "make-demo-archive.ts");

/** "ferry-terminal-interviews-1978" → "Ferry Terminal Interviews 1978" (a known demo name wins). */
export function collectionNameFor(folder: string): string {
  const words = folder.replace(/[-_]+/g, " ").trim();
  const known = DEMO_COLLECTIONS.find((c) => c.toLowerCase() === words.toLowerCase());
  return known ?? words.replace(/\b\p{Ll}/gu, (c) => c.toUpperCase());
}

function collectionFolders(archiveDir: string): string[] {
  if (!existsSync(archiveDir)) return [];
  return readdirSync(archiveDir)
    .filter((name) => !name.startsWith(".") && statSync(path.join(archiveDir, name)).isDirectory())
    .sort();
}

function makeArchive(archiveDir: string, log: (line: string) => void): Promise<void> {
  if (!existsSync(ARCHIVE_SCRIPT)) return Promise.reject(new Error(`no demo archive and no ${path.relative(projectRoot, ARCHIVE_SCRIPT)} to make one`));
  log("synthesising the demo archive (examples/make-demo-archive.ts)");
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ["--import", "tsx", ARCHIVE_SCRIPT, archiveDir], { cwd: projectRoot, stdio: ["ignore", "ignore", "pipe"] });
    let stderr = "";
    child.stderr.on("data", (c: Buffer) => (stderr = (stderr + c.toString()).slice(-4000)));
    child.on("error", reject);
    child.on("close", (code) => (code === 0 ? resolve() : reject(new Error(`make-demo-archive exited ${code}: ${stderr.trim()}`))));
  });
}

/** A signed-in API client for the review steps, as the portal would make them. */
async function signedIn(baseUrl: string, email: string, password: string) {
  const login = await fetch(`${baseUrl}/api/session`, {
    method: "POST",
    headers: { "content-type": "application/json", [CSRF_HEADER]: "1" },
    body: JSON.stringify({ email, password }),
  });
  if (!login.ok) throw new Error(`demo sign-in as ${email} failed: ${login.status} ${await login.text()}`);
  const cookie = login.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .join("; ");
  const call = async <T>(method: string, url: string, body?: unknown): Promise<T> => {
    const res = await fetch(`${baseUrl}${url}`, {
      method,
      headers: { cookie, [CSRF_HEADER]: "1", ...(body ? { "content-type": "application/json" } : {}) },
      body: body ? JSON.stringify(body) : undefined,
    });
    if (!res.ok) throw new Error(`${method} ${url} as ${email}: ${res.status} ${await res.text()}`);
    return (await res.json()) as T;
  };
  return call;
}

async function addReviewActivity(baseUrl: string, password: string, log: (line: string) => void): Promise<void> {
  const supervisor = await signedIn(baseUrl, "supervisor@harbourside.test", password);
  const technician = await signedIn(baseUrl, "technician@harbourside.test", password);
  const failing = await supervisor<Page<FileSummaryDto>>("GET", "/api/files?verdict=fail&sort=path&pageSize=3");
  const passing = await supervisor<Page<FileSummaryDto>>("GET", "/api/files?verdict=pass&sort=path&pageSize=2");
  const [first, second] = failing.items;
  if (first) {
    await technician("POST", `/api/files/${first.id}/comments`, {
      body: "Heard the fault on the replay deck too; the tape has a crease around this point.",
    });
    await supervisor("POST", `/api/files/${first.id}/comments`, {
      body: "Please re-transfer after baking the reel; keep this take for comparison.",
    });
    await supervisor("PATCH", `/api/files/${first.id}`, { reviewState: "retransfer", reason: "fault is on the transfer, not the tape" });
  }
  if (second) {
    await supervisor("PATCH", `/api/files/${second.id}`, { reviewState: "flagged", reason: "check against the original reel notes" });
  }
  if (passing.items.length) {
    await supervisor("POST", "/api/files/review", {
      ids: passing.items.map((f) => f.id),
      reviewState: "accepted",
      reason: "spot-checked, fine",
    });
  }
  log(`review activity added (${failing.items.length} failing, ${passing.items.length} passing files touched)`);
}

export async function seedDemo(options: SeedDemoOptions): Promise<SeedDemoResult> {
  const log = options.log ?? (() => undefined);
  const password = options.password ?? DEFAULT_DEMO_PASSWORD;
  if ((await User.count()) > 0) {
    log("database already has users: not seeding");
    return { seeded: false, batchIds: [] };
  }
  const users = await createDemoUsers(password, options.passwordCost ?? DEFAULT_SCRYPT_COST);
  await AuditEntry.create({ actorId: null, action: "seed.demo", targetType: "system", targetId: null, requestId: null, details: { users: Object.keys(users) } });
  const { plaintext } = await createApiToken(users.technician.id, "demo seed (tidemark scan --upload)");

  const archiveDir = options.archiveDir ?? path.join(projectRoot, "examples", "audio", "archive");
  if (collectionFolders(archiveDir).length === 0) await makeArchive(archiveDir, log);
  const folders = collectionFolders(archiveDir);
  if (folders.length === 0) throw new Error(`the demo archive ${archiveDir} has no collection folders`);

  const work = mkdtempSync(path.join(tmpdir(), "tidemark-seed-"));
  const batchIds: number[] = [];
  try {
    for (const folder of folders) {
      const collection = collectionNameFor(folder);
      const slug = folder.toLowerCase().replace(/[^a-z0-9]+/g, "-");
      const out = path.join(work, slug);
      mkdirSync(out, { recursive: true });
      const run = await runCli(
        [
          "scan", path.join(archiveDir, folder),
          "--spectrograms", path.join(out, "png"),
          "--out", path.join(out, "report.json"),
          "--quiet",
          "--upload", "--server", options.baseUrl,
          "--collection", collection,
          "--batch-key", `demo-${slug}`,
        ],
        { ...process.env, TIDEMARK_TOKEN: plaintext, TIDEMARK_CONFIG_DIR: path.join(work, "config"), TIDEMARK_SPOOL_DIR: path.join(work, "spool") },
      );
      // Exit 1 means "a file failed", which the demo wants; anything else is a broken run.
      if (run.code !== 0 && run.code !== 1) {
        throw new Error(`tidemark scan of ${folder} exited ${run.code}: ${run.stderr.trim().split("\n").slice(-5).join(" | ")}`);
      }
      const row = await Batch.findOne({ where: { uploaderId: users.technician.id, batchKey: `demo-${slug}` } });
      if (!row) throw new Error(`tidemark scan of ${folder} finished (exit ${run.code}) but no batch arrived: ${run.stderr.trim().slice(-500)}`);
      batchIds.push(row.id);
      log(`scanned and uploaded ${folder} as "${collection}" (batch ${row.id}, CLI exit ${run.code})`);
    }
    await addReviewActivity(options.baseUrl, password, log);
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
  return { seeded: true, batchIds };
}
