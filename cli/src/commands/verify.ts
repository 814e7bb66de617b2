/**
 * `tidemark verify <paths> --against REPORT.json`: fixity check. Recomputes each file's SHA-256 and
 * compares it with the earlier report: changed, missing, new and unreadable files are listed.
 */
import { readFile } from "node:fs/promises";
import path from "node:path";
import { scanReportSchema, type ScanReport } from "@tidemark/shared/types/report";
import { EXIT_CODES, UsageError } from "../errors.ts";
import { sha256OfFile } from "../fixity/hashFile.ts";
import type { CliIo } from "../io.ts";
import type { VerifyOptions } from "../options.ts";
import { crawlFiles, type CrawledFile } from "../scan/crawlFiles.ts";

export interface FixityComparison {
  against: string;
  unchanged: string[];
  changed: { path: string; expectedSha256: string; actualSha256: string }[];
  missing: string[];
  new: string[];
  /** Hashed in the earlier report, but cannot be read now. */
  unreadable: { path: string; reason: string }[];
  /** Could not be read at the earlier scan either: nothing to compare with. */
  unverifiable: string[];
}

/** Reads and checks a JSON report against the report contract; errors name the bad field. */
export async function readReport(file: string, cwd: string): Promise<{ report: ScanReport; text: string }> {
  let text: string;
  try {
    text = await readFile(path.resolve(cwd, file), "utf8");
  } catch (error) {
    const errno = (error as { code?: string }).code;
    throw new UsageError(errno === "ENOENT" ? `report not found: ${file}` : `cannot read report ${file}: ${errno ?? String(error)}`);
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (error) {
    throw new UsageError(`${file} is not a JSON report: ${(error as Error).message.split("\n")[0]}`);
  }
  const parsed = scanReportSchema.safeParse(value);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const field = issue.path.map(String).join(".") || "(top level)";
    throw new UsageError(`${file} is not a tidemark report: ${field}: ${issue.message.replace(/^Invalid input: /, "")}`);
  }
  return { report: parsed.data, text };
}

const HASH_CONCURRENCY = 2;

async function hashAll(files: readonly CrawledFile[]): Promise<Map<string, string | Error>> {
  const out = new Map<string, string | Error>();
  let next = 0;
  const lane = async (): Promise<void> => {
    while (next < files.length) {
      const file = files[next++];
      out.set(file.relPath, await sha256OfFile(file.absPath).catch((e: unknown) => (e instanceof Error ? e : new Error(String(e)))));
    }
  };
  await Promise.all(Array.from({ length: HASH_CONCURRENCY }, lane));
  return out;
}

export async function compareFixity(paths: string[], options: VerifyOptions, io: CliIo): Promise<FixityComparison> {
  const { report } = await readReport(options.against, io.cwd);
  const crawl = await crawlFiles(paths, { include: options.include, exclude: options.exclude, cwd: io.cwd });
  const earlier = new Map(report.files.map((f) => [f.path, f]));
  const toHash = crawl.files.filter((f) => earlier.get(f.relPath)?.sha256);
  const hashes = await hashAll(toHash);
  const result: FixityComparison = { against: options.against, unchanged: [], changed: [], missing: [], new: [], unreadable: [], unverifiable: [] };
  const present = new Set<string>();
  for (const file of crawl.files) {
    present.add(file.relPath);
    const before = earlier.get(file.relPath);
    if (!before) {
      result.new.push(file.relPath);
      continue;
    }
    if (!before.sha256) {
      result.unverifiable.push(file.relPath);
      continue;
    }
    const now = hashes.get(file.relPath);
    if (now instanceof Error || now === undefined) {
      result.unreadable.push({ path: file.relPath, reason: now instanceof Error ? now.message : "not hashed" });
    } else if (now === before.sha256) {
      result.unchanged.push(file.relPath);
    } else {
      result.changed.push({ path: file.relPath, expectedSha256: before.sha256, actualSha256: now });
    }
  }
  for (const p of crawl.problems) {
    present.add(p.relPath);
    if (earlier.get(p.relPath)?.sha256) result.unreadable.push({ path: p.relPath, reason: p.message });
  }
  for (const f of report.files) if (!present.has(f.path) && f.sha256) result.missing.push(f.path);
  return result;
}

export function fixityText(c: FixityComparison): string {
  const lines: string[] = [];
  for (const x of c.changed) lines.push(`changed     ${x.path}  (sha256 was ${x.expectedSha256.slice(0, 16)}…, now ${x.actualSha256.slice(0, 16)}…)`);
  for (const p of c.missing) lines.push(`missing     ${p}`);
  for (const x of c.unreadable) lines.push(`unreadable  ${x.path}  (${x.reason})`);
  for (const p of c.new) lines.push(`new         ${p}`);
  for (const p of c.unverifiable) lines.push(`unverified  ${p}  (no SHA-256 in the earlier report: it could not be read then)`);
  lines.push(
    `${c.unchanged.length} unchanged, ${c.changed.length} changed, ${c.missing.length} missing, ${c.unreadable.length} unreadable, ${c.new.length} new (against ${c.against})`,
  );
  return `${lines.join("\n")}\n`;
}

export async function verifyCommand(paths: string[], options: VerifyOptions, io: CliIo): Promise<number> {
  const comparison = await compareFixity(paths, options, io);
  io.stdout.write(options.json ? `${JSON.stringify(comparison, null, 2)}\n` : fixityText(comparison));
  const bad = comparison.changed.length + comparison.missing.length + comparison.unreadable.length;
  return bad > 0 ? EXIT_CODES.failed : EXIT_CODES.ok;
}
