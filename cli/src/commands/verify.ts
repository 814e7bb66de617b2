/**
 * `tidemark verify <paths> --against REPORT.json`: fixity check. Recomputes each file's SHA-256 and
 * compares it with the earlier report: changed, missing, moved, new and unreadable files are listed. Files
 * are matched on their paths whichever folder verify runs from (fixity/matchPaths.ts), then by SHA-256.
 */
import { readFile } from "node:fs/promises";
import path from "node:path";
import { scanReportSchema, type ScanReport } from "@tidemark/shared/types/report";
import { resolveCredentials } from "../config/storedLogin.ts";
import { EXIT_CODES, oneLine, UsageError } from "../errors.ts";
import { ApiError, createApiClient, retryPolicyFrom, WrongServerError } from "../api/apiClient.ts";
import { exitErrorFor, isAuthRefusal } from "../api/apiExit.ts";
import type { CliIo } from "../io.ts";
import type { VerifyOptions } from "../options.ts";
import type { BagVerdict } from "@tidemark/shared/fixity/bagit";
import { compareChecksums, type ChecksumAlgorithm, type ExpectedChecksum } from "@tidemark/shared/fixity/checksumFiles";
import type { FixityCheckUploadRequest, FixityCheckUploadResultDto, FixityOutcome } from "@tidemark/shared/types/api";
import type { ChecksumCheck } from "@tidemark/shared/types/report";
import { bagSize, digestsOfFile, isBag, verifyBag } from "../fixity/bag.ts";
import { expectedChecksums } from "../fixity/sidecars.ts";
import { alignPaths } from "../fixity/matchPaths.ts";
import { crawlFiles, type CrawledFile } from "../scan/crawlFiles.ts";
import { displayPath, fileKey } from "../scan/rawPath.ts";
import { createScanProgress, progressDisplay, type ScanProgress } from "../scan/progress.ts";

export interface FixityComparison {
  /** The earlier report, or null when only checksum sidecars and manifests were the reference. */
  against: string | null;
  unchanged: string[];
  changed: { path: string; expectedSha256: string; actualSha256: string }[];
  missing: string[];
  new: string[];
  /** Same SHA-256 at another path: the earlier report's path and where the file is now. */
  moved: { from: string; to: string }[];
  /** Hashed in the earlier report, but cannot be read now. */
  unreadable: { path: string; reason: string }[];
  /** Could not be read at the earlier scan either: nothing to compare with. */
  unverifiable: string[];
  /** Sidecars (tape.wav.md5) and --checksums lines the file does not match. */
  checksumMismatches: ({ path: string } & ChecksumCheck)[];
  /** Sidecars and manifest lines whose file is gone. */
  orphanChecksums: { path: string; source: string }[];
  /** How many sidecar and manifest checksums were compared. */
  checksumsChecked: number;
  /** Each file's outcome with the earlier report's path, as `--upload` sends it (report mode only). */
  checks: FixityCheckUploadRequest["checks"];
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

type Digests = Map<ChecksumAlgorithm, string>;

/** Each file read once for every algorithm it needs (SHA-256 always), two files at a time. */
async function hashAll(files: readonly CrawledFile[], algorithmsOf: (f: CrawledFile) => ChecksumAlgorithm[], progress: ScanProgress): Promise<Map<string, Digests | Error>> {
  const out = new Map<string, Digests | Error>();
  let next = 0;
  const lane = async (): Promise<void> => {
    while (next < files.length) {
      const file = files[next++];
      progress.fileStarted(file.relPath);
      const digests = await digestsOfFile(file.absPath, [...new Set<ChecksumAlgorithm>(["sha256", ...algorithmsOf(file)])], (bytes) =>
        progress.fileBytes(file.relPath, bytes),
      ).catch((e: unknown) => (e instanceof Error ? e : new Error(String(e))));
      out.set(fileKey(file), digests);
      progress.fileDone(file.relPath, 0, file.sizeBytes);
    }
  };
  await Promise.all(Array.from({ length: HASH_CONCURRENCY }, lane));
  return out;
}

const toPosix = (p: string): string => p.split(path.sep).join("/");

/**
 * Compares today's files with an earlier report (`against`) and with their checksum sidecars and
 * --checksums manifests; with no report, the checksums alone are the reference.
 */
export async function compareFixity(paths: string[], options: VerifyOptions, io: CliIo): Promise<FixityComparison> {
  const report = options.against === null ? null : (await readReport(options.against, io.cwd)).report;
  const crawl = await crawlFiles(paths, { include: options.include, exclude: options.exclude, cwd: io.cwd });
  const shown = (abs: string): string => toPosix(path.relative(io.cwd, abs));
  // Sidecars are found by path string; a name that is not UTF-8 is checked against the report only.
  const sidecars = await expectedChecksums(
    crawl.files.flatMap((f) => (typeof f.absPath === "string" ? [f.absPath] : [])),
    paths.map((p) => path.resolve(io.cwd, p)),
    options.checksums.map((m) => path.resolve(io.cwd, m)),
    shown,
  );
  for (const w of sidecars.warnings) io.stderr.write(`tidemark: warning: ${w}\n`);
  if (!report && sidecars.byFile.size === 0 && sidecars.orphans.length === 0) {
    throw new UsageError(
      "expected --against REPORT.json (the earlier scan's report), checksum sidecars or --checksums FILE, or one BagIt bag folder (with bagit.txt) to check against its manifests",
    );
  }

  // Keyed by fileKey: a name that is not UTF-8 is matched on its exact bytes (only where it was before).
  const earlier = new Map((report?.files ?? []).map((f) => [fileKey(f), f]));
  const shownEarlier = (key: string): string => earlier.get(key)?.path ?? key;
  const { matches, inScope, toEarlier } = alignPaths(
    crawl.files.map((f) => ({ relPath: fileKey(f), absPosix: f.pathBytes ? fileKey(f) : toPosix(displayPath(f.absPath)) })),
    new Set(earlier.keys()),
  );
  const earlierOf = new Map(matches.map((m) => [m.relPath, m.earlier]));
  const claimed = new Set(matches.flatMap((m) => (m.earlier === null ? [] : [m.earlier])));
  // Files that may have moved: today's unmatched files are hashed too when an earlier file went unclaimed.
  const unclaimedHashes = new Map<string, string>();
  for (const f of report?.files ?? []) if (f.sha256 && !claimed.has(fileKey(f)) && inScope(fileKey(f))) unclaimedHashes.set(f.sha256, fileKey(f));
  const expectedOf = (f: CrawledFile): ExpectedChecksum[] => (typeof f.absPath === "string" ? sidecars.byFile.get(f.absPath) : undefined) ?? [];
  const toHash = crawl.files.filter((f) => {
    if (expectedOf(f).length > 0) return true;
    const before = earlierOf.get(fileKey(f));
    return before ? Boolean(earlier.get(before)?.sha256) : unclaimedHashes.size > 0;
  });
  const progress = createScanProgress({
    total: toHash.length,
    totalBytes: toHash.reduce((n, f) => n + f.sizeBytes, 0),
    alreadyDone: 0,
    stream: io.stderr as NodeJS.WritableStream,
    display: progressDisplay(options.quiet, options.progress),
  });
  let hashes: Map<string, Digests | Error>;
  try {
    hashes = await hashAll(toHash, (f) => expectedOf(f).map((e) => e.algorithm), progress);
  } finally {
    progress.stop();
  }

  const result: FixityComparison = {
    against: options.against,
    unchanged: [],
    changed: [],
    missing: [],
    new: [],
    moved: [],
    unreadable: [],
    unverifiable: [],
    checksumMismatches: [],
    orphanChecksums: sidecars.orphans.map((o) => ({ path: shown(o.absPath), source: o.source })),
    checksumsChecked: 0,
    checks: [],
  };
  const check = (path: string, outcome: FixityOutcome, extra: Partial<FixityCheckUploadRequest["checks"][number]> = {}): void =>
    void result.checks.push({ path, outcome, expectedSha256: null, actualSha256: null, movedTo: null, detail: "", ...extra });
  const present = new Set<string>(claimed);
  for (const file of crawl.files) {
    const beforePath = earlierOf.get(fileKey(file)) ?? null;
    const digests = hashes.get(fileKey(file));
    const now = digests instanceof Map ? digests.get("sha256") : digests;
    const expected = expectedOf(file);
    if (expected.length > 0 && digests instanceof Map) {
      for (const check of compareChecksums(expected, digests)) {
        result.checksumsChecked += 1;
        if (!check.matches) result.checksumMismatches.push({ path: file.relPath, ...check });
      }
    }
    if (beforePath === null) {
      const from = typeof now === "string" ? unclaimedHashes.get(now) : undefined;
      if (from !== undefined) {
        unclaimedHashes.delete(now as string);
        present.add(from);
        result.moved.push({ from: shownEarlier(from), to: file.relPath });
        check(shownEarlier(from), "moved", { expectedSha256: now as string, actualSha256: now as string, movedTo: toEarlier(file.relPath) });
      } else if (!report && expected.length > 0 && digests instanceof Map) {
        // Checked against its checksums alone.
        if (compareChecksums(expected, digests).every((c) => c.matches)) result.unchanged.push(file.relPath);
      } else if (!report && digests instanceof Error) {
        result.unreadable.push({ path: file.relPath, reason: digests.message });
      } else {
        result.new.push(file.relPath);
      }
      continue;
    }
    const before = earlier.get(beforePath)!;
    if (!before.sha256) {
      result.unverifiable.push(file.relPath);
    } else if (typeof now !== "string") {
      const reason = now instanceof Error ? now.message : "not hashed";
      result.unreadable.push({ path: file.relPath, reason });
      check(before.path, "unreadable", { expectedSha256: before.sha256, detail: reason });
    } else if (now === before.sha256) {
      result.unchanged.push(file.relPath);
      check(before.path, "unchanged", { expectedSha256: before.sha256, actualSha256: now });
    } else {
      result.changed.push({ path: file.relPath, expectedSha256: before.sha256, actualSha256: now });
      check(before.path, "changed", { expectedSha256: before.sha256, actualSha256: now });
    }
  }
  for (const p of crawl.problems) {
    const key = fileKey(p);
    const tail = [...earlier.keys()].find((e) => e === key || (!p.pathBytes && toPosix(displayPath(p.absPath)).endsWith(`/${e}`)));
    if (tail === undefined) continue;
    present.add(tail);
    const sha = earlier.get(tail)?.sha256;
    if (sha) {
      result.unreadable.push({ path: p.relPath, reason: p.message });
      check(shownEarlier(tail), "unreadable", { expectedSha256: sha, detail: p.message });
    }
  }
  for (const f of report?.files ?? []) {
    if (present.has(fileKey(f)) || !f.sha256 || !inScope(fileKey(f))) continue;
    result.missing.push(f.path);
    check(f.path, "missing", { expectedSha256: f.sha256 });
  }
  return result;
}

export function fixityText(c: FixityComparison): string {
  const lines: string[] = [];
  for (const x of c.changed) lines.push(`changed     ${x.path}  (sha256 was ${x.expectedSha256.slice(0, 16)}…, now ${x.actualSha256.slice(0, 16)}…)`);
  for (const p of c.missing) lines.push(`missing     ${p}`);
  for (const x of c.unreadable) lines.push(`unreadable  ${x.path}  (${x.reason})`);
  for (const x of c.moved) lines.push(`moved       ${x.from} → ${x.to}  (same SHA-256)`);
  for (const p of c.new) lines.push(`new         ${p}`);
  for (const p of c.unverifiable) lines.push(`unverified  ${p}  (no SHA-256 in the earlier report: it could not be read then)`);
  for (const x of c.checksumMismatches) lines.push(`mismatch    ${x.path}  (${x.algorithm} is ${x.actual ?? "unknown"}, ${x.source} says ${x.expected})`);
  for (const x of c.orphanChecksums) lines.push(`missing     ${x.path}  (${x.source} has a checksum for it)`);
  const checksums = c.checksumsChecked + c.orphanChecksums.length > 0 ? `; checksums: ${c.checksumsChecked - c.checksumMismatches.length} match, ${c.checksumMismatches.length} mismatch, ${c.orphanChecksums.length} without file` : "";
  lines.push(
    `${c.unchanged.length} unchanged, ${c.changed.length} changed, ${c.missing.length} missing, ${c.unreadable.length} unreadable, ${c.new.length} new, ${c.moved.length} moved (against ${c.against ?? "checksums"})${checksums}`,
  );
  return `${lines.join("\n")}\n`;
}

export function bagText(dir: string, v: BagVerdict): string {
  const lines = v.problems.map((p) => `${p.kind.padEnd(11)} ${p.path ?? ""}${p.path ? "  " : ""}(${p.message})`);
  const counts = (["changed", "missing", "extra", "unreadable"] as const).map((k) => `${v.problems.filter((p) => p.kind === k).length} ${k}`).join(", ");
  lines.push(`bag ${dir}: ${v.valid ? "valid" : "NOT valid"} (RFC 8493): ${v.payloadFiles} payload files, ${v.payloadBytes} bytes, ${v.algorithms.join("+") || "no manifest"}; ${counts}`);
  return `${lines.join("\n")}\n`;
}

async function verifyBagCommand(dir: string, options: VerifyOptions, io: CliIo): Promise<number> {
  const abs = path.resolve(io.cwd, dir);
  const size = await bagSize(abs);
  const progress = createScanProgress({ total: size.files, totalBytes: size.bytes, alreadyDone: 0, stream: io.stderr as NodeJS.WritableStream, display: progressDisplay(options.quiet, options.progress) });
  let verdict: BagVerdict;
  try {
    verdict = await verifyBag(abs, progress);
  } finally {
    progress.stop();
  }
  io.stdout.write(options.json ? `${JSON.stringify({ bag: dir, ...verdict }, null, 2)}\n` : bagText(dir, verdict));
  if (verdict.valid) return EXIT_CODES.ok;
  return verdict.problems.every((p) => p.kind === "unreadable") ? EXIT_CODES.unreadable : EXIT_CODES.failed;
}

/** The server takes at most this many checks a request. */
const CHECKS_PER_REQUEST = 1000;

/** verify --upload: each file's outcome to the server's fixity history, in slices. */
async function uploadChecks(comparison: FixityComparison, target: { server: string | null; collection: string | null }, io: CliIo): Promise<number> {
  const log = (line: string): void => void io.stderr.write(`tidemark: ${line}\n`);
  const { server, token } = await resolveCredentials(target.server, io.env);
  const client = createApiClient(server, token, retryPolicyFrom(io.env), (attempt, problem) => log(`fixity upload attempt ${attempt} failed (${problem}); retrying`));
  const checkedAt = new Date().toISOString();
  let sent = 0;
  let changed = 0;
  let unknown = 0;
  try {
    for (let i = 0; i < comparison.checks.length; i += CHECKS_PER_REQUEST) {
      const body: FixityCheckUploadRequest = { collection: target.collection!, checkedAt, checks: comparison.checks.slice(i, i + CHECKS_PER_REQUEST) };
      const answer = await client.postJson<FixityCheckUploadResultDto>("/api/fixity-checks", body);
      sent += answer.body.stored;
      changed += answer.body.changed;
      unknown += answer.body.unknownPaths;
    }
  } catch (error) {
    if (isAuthRefusal(error) || error instanceof WrongServerError) {
      log(`${exitErrorFor(error, server, "verify --upload").message} (${sent} of ${comparison.checks.length} fixity checks sent)`);
      return isAuthRefusal(error) ? EXIT_CODES.auth : EXIT_CODES.unreachable;
    }
    if (error instanceof ApiError) {
      log(`the server refused the fixity checks after ${sent} of ${comparison.checks.length}: ${error.message}`);
      return EXIT_CODES.usage;
    }
    // Nothing is spooled for verify: the same command sends the checks again (exit 6, as for any unreachable server).
    log(`not delivered: ${sent} of ${comparison.checks.length} fixity checks reached ${server} (${oneLine(error)}); run the same verify again to send them`);
    return EXIT_CODES.unreachable;
  }
  log(`sent ${sent} fixity checks to ${server} (collection "${target.collection}"): ${changed} changed${unknown ? `, ${unknown} of paths the collection has no scan of` : ""}`);
  return EXIT_CODES.ok;
}

export async function verifyCommand(paths: string[], options: VerifyOptions, io: CliIo): Promise<number> {
  if (options.against === null && options.checksums.length === 0 && paths.length === 1 && (await isBag(path.resolve(io.cwd, paths[0])))) {
    return verifyBagCommand(paths[0], options, io);
  }
  if (options.upload && options.against === null) throw new UsageError("--upload sends the comparison with an earlier report: add --against REPORT.json");
  if (options.upload && !options.upload.collection) throw new UsageError("--upload needs the collection the files were scanned into: --collection NAME (or tidemark.json)");
  const comparison = await compareFixity(paths, options, io);
  io.stdout.write(options.json ? `${JSON.stringify(comparison, null, 2)}\n` : fixityText(comparison));
  if (options.upload) {
    const code = await uploadChecks(comparison, options.upload, io);
    if (code !== EXIT_CODES.ok) return code;
  }
  const bad = comparison.changed.length + comparison.missing.length + comparison.checksumMismatches.length + comparison.orphanChecksums.length;
  if (bad > 0) return EXIT_CODES.failed;
  return comparison.unreadable.length > 0 ? EXIT_CODES.unreadable : EXIT_CODES.ok;
}
