/**
 * `tidemark match <file> --against REPORT.json` (or `--server URL`): is this recording elsewhere in the
 * archive? Fingerprints the file in one read, compares it with the fingerprints earlier scans put in
 * their reports (or asks the server's index), and prints the best matches. Exit 0 with a match, 1 without.
 */
import path from "node:path";
import { EXIT_CODES, UsageError } from "../errors.ts";
import type { CliIo } from "../io.ts";
import { fingerprintAudioFile } from "../match/fingerprintAudioFile.ts";
import { matchLines, type FoundMatch } from "../match/formatMatches.ts";
import { matchAgainstReports } from "../match/matchReports.ts";
import type { MatchOptions } from "../match/matchOptions.ts";
import { matchOnServer } from "../match/matchOnServer.ts";
import { argumentPaths } from "../scan/rawPath.ts";

export async function matchCommand(file: string, options: MatchOptions, io: CliIo): Promise<number> {
  // A name that is not UTF-8 arrives lossily decoded: found again by its bytes (rawPath.ts), as scan does.
  const found = await argumentPaths(file, io.cwd);
  if (found.length > 1) {
    throw new UsageError(`${file} could name ${found.length} files whose names are not UTF-8 and look alike; give the name as its bytes or rename one`);
  }
  const query = await fingerprintAudioFile(found[0] ?? path.resolve(io.cwd, file), file);
  if (query.hashes.length === 0) io.stderr.write(`tidemark: ${file} gave no landmarks to match (silent, or too short)
`);
  let matches: FoundMatch[];
  if (options.server) {
    matches = await matchOnServer(query, options.server, io.env, options.limit);
  } else {
    const found = await matchAgainstReports(query, options.against, io.cwd, options.limit);
    const skipped = found.withoutFingerprint + found.otherVersion;
    if (skipped > 0) {
      io.stderr.write(
        `tidemark: compared with ${found.compared} files; ${skipped} had no fingerprint of this version (${found.withoutFingerprint} none, ${found.otherVersion} another version)\n`,
      );
    }
    matches = found.matches;
  }
  if (options.json) {
    const summary = { version: query.version, hashes: query.hashes.length, durationSeconds: query.durationSeconds };
    io.stdout.write(`${JSON.stringify({ file, fingerprint: summary, matches }, null, 2)}\n`);
  } else {
    io.stdout.write(matchLines(matches));
    if (matches.length === 0) io.stderr.write(`tidemark: no recording matches ${file}\n`);
  }
  return matches.length > 0 ? EXIT_CODES.ok : EXIT_CODES.failed;
}
