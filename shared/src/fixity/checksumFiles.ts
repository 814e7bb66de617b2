/**
 * Checksum sidecars (`tape.wav.md5` beside `tape.wav`) and checksum manifests as coreutils writes and
 * reads them (`md5sum`, `sha1sum`, `sha256sum`, `sha512sum`: "HEX  NAME", "HEX *NAME" in binary mode, a
 * leading backslash when the name holds a backslash or newline; and the `--tag` form "SHA256 (NAME) = HEX").
 * Pure: the CLI reads the files and hashes the audio.
 */
import type { ChecksumCheck, Finding } from "../types/report.ts";

export const CHECKSUM_ALGORITHMS = ["md5", "sha1", "sha256", "sha512"] as const;
export type ChecksumAlgorithm = (typeof CHECKSUM_ALGORITHMS)[number];

const BY_HEX_LENGTH = new Map<number, ChecksumAlgorithm>([
  [32, "md5"],
  [40, "sha1"],
  [64, "sha256"],
  [128, "sha512"],
]);

/** Sidecar extensions looked for next to each file, in this order. */
export const SIDECAR_EXTENSIONS: Record<string, ChecksumAlgorithm> = { ".md5": "md5", ".sha1": "sha1", ".sha256": "sha256", ".sha512": "sha512" };

export interface ExpectedChecksum {
  algorithm: ChecksumAlgorithm;
  digest: string;
  /** Where it was read, for messages: "tape.wav.md5" or "delivery.sha256:14". */
  source: string;
}

export interface ChecksumLine {
  /** The name as written in the manifest (relative to the manifest's folder, or absolute). */
  name: string;
  expected: ExpectedChecksum;
}

export class ChecksumFileError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "ChecksumFileError";
  }
}

/** coreutils escapes "\\" and "\n" in names when the line starts with a backslash. */
function unescapeName(name: string): string {
  return name.replace(/\\(\\|n)/g, (_m, c: string) => (c === "n" ? "\n" : "\\"));
}

const TAG_NAMES: Record<string, ChecksumAlgorithm> = { MD5: "md5", SHA1: "sha1", SHA256: "sha256", SHA512: "sha512" };

/** One manifest line, or null for a blank or comment line; throws for a line that is neither. */
export function parseChecksumLine(raw: string, source: string, hint?: ChecksumAlgorithm): ChecksumLine | null {
  if (raw.trim() === "" || raw.startsWith("#")) return null;
  const tagged = /^(\\)?(MD5|SHA1|SHA256|SHA512) \((.*)\) = ([0-9a-fA-F]+)$/.exec(raw);
  if (tagged) {
    const algorithm = TAG_NAMES[tagged[2]];
    return checked(tagged[1] ? unescapeName(tagged[3]) : tagged[3], tagged[4], algorithm, source);
  }
  const plain = /^(\\)?([0-9a-fA-F]+) [ *](.+)$/.exec(raw);
  if (!plain) throw new ChecksumFileError(`${source}: not a checksum line ("HEX  NAME" or "ALG (NAME) = HEX"): ${JSON.stringify(raw.slice(0, 80))}`);
  const algorithm = BY_HEX_LENGTH.get(plain[2].length) ?? hint;
  if (!algorithm) throw new ChecksumFileError(`${source}: a checksum of ${plain[2].length} hex digits is none of md5, sha1, sha256, sha512`);
  return checked(plain[1] ? unescapeName(plain[3]) : plain[3], plain[2], algorithm, source);
}

function checked(name: string, hex: string, algorithm: ChecksumAlgorithm, source: string): ChecksumLine {
  const expectedLength = [...BY_HEX_LENGTH].find(([, a]) => a === algorithm)![0];
  if (hex.length !== expectedLength) throw new ChecksumFileError(`${source}: a ${algorithm} checksum has ${expectedLength} hex digits, got ${hex.length}`);
  return { name, expected: { algorithm, digest: hex.toLowerCase(), source } };
}

/** Every line of a manifest (`md5sum * > delivery.md5` and the like). */
export function parseChecksumManifest(text: string, source: string, hint?: ChecksumAlgorithm): ChecksumLine[] {
  const out: ChecksumLine[] = [];
  for (const [i, raw] of text.split(/\r\n|\n/).entries()) {
    const line = parseChecksumLine(raw, `${source}:${i + 1}`, hint);
    if (line) out.push(line);
  }
  return out;
}

/**
 * A sidecar's expected digest: a bare hex string, or one manifest line naming the file (coreutils output
 * redirected into the sidecar). A line naming another file is an error, not silently ignored.
 */
export function parseSidecar(text: string, source: string, algorithm: ChecksumAlgorithm, fileName: string): ExpectedChecksum {
  const lines = text.split(/\r\n|\n/).filter((l) => l.trim() !== "" && !l.startsWith("#"));
  if (lines.length !== 1) throw new ChecksumFileError(`${source}: expected one checksum, found ${lines.length} lines`);
  const bare = /^\s*([0-9a-fA-F]+)\s*$/.exec(lines[0]);
  if (bare) return checked(fileName, bare[1], algorithm, source).expected;
  const line = parseChecksumLine(lines[0], source, algorithm)!;
  const named = line.name.split(/[\\/]/).pop();
  if (named !== fileName) throw new ChecksumFileError(`${source}: names ${JSON.stringify(line.name)}, not ${JSON.stringify(fileName)}`);
  if (line.expected.algorithm !== algorithm) throw new ChecksumFileError(`${source}: holds a ${line.expected.algorithm} checksum, its name says ${algorithm}`);
  return line.expected;
}

/** Each expected checksum against the digests of the file's bytes, for the report's `checksums`. */
export function compareChecksums(expected: readonly ExpectedChecksum[], actual: ReadonlyMap<ChecksumAlgorithm, string>): ChecksumCheck[] {
  return expected.map((e) => {
    const now = actual.get(e.algorithm) ?? null;
    return { algorithm: e.algorithm, source: e.source, expected: e.digest, actual: now, matches: now === e.digest };
  });
}

/** A `checksum-mismatch` finding per check that failed (severity as the profile then rules). */
export function checksumFindings(checks: readonly ChecksumCheck[]): Finding[] {
  return checks
    .filter((c) => !c.matches)
    .map((c) => ({
      code: "checksum-mismatch" as const,
      severity: "fail" as const,
      channel: null,
      startSeconds: null,
      endSeconds: null,
      message:
        c.actual === null
          ? `${c.algorithm.toUpperCase()} could not be computed to check ${c.source}`
          : `${c.algorithm.toUpperCase()} of the file is ${c.actual}; ${c.source} says ${c.expected}: the file is not the one that checksum was made of`,
    }));
}
