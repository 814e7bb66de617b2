/**
 * BagIt (RFC 8493) text files, pure: parsing and writing bagit.txt, bag-info.txt and the (tag) manifests,
 * and judging a bag from what the CLI found on disk. No I/O here; cli/src/fixity/bag.ts reads and hashes.
 */

/** Algorithms a manifest may name (RFC 8493 §2.4 names these; sha512 and sha256 are the recommended ones). */
export const BAG_ALGORITHMS = ["md5", "sha1", "sha256", "sha512"] as const;
export type BagAlgorithm = (typeof BAG_ALGORITHMS)[number];

export const BAGIT_VERSION = "1.0";

const HEX_LENGTH: Record<BagAlgorithm, number> = { md5: 32, sha1: 40, sha256: 64, sha512: 128 };

/** A manifest line's path: CR, LF and % are percent-encoded (RFC 8493 §2.1.3). */
export function encodeBagPath(path: string): string {
  return path.replace(/%/g, "%25").replace(/\r/g, "%0D").replace(/\n/g, "%0A");
}

export function decodeBagPath(path: string): string {
  return path.replace(/%0D/gi, "\r").replace(/%0A/gi, "\n").replace(/%25/g, "%");
}

export interface ManifestEntry {
  path: string;
  digest: string;
}

export class BagFormatError extends Error {
  constructor(
    readonly file: string,
    message: string,
  ) {
    super(`${file}: ${message}`);
    this.name = "BagFormatError";
  }
}

/** `checksum filepath` lines, one or more spaces or tabs between (RFC 8493 §2.1.3). */
export function parseManifest(text: string, file: string, algorithm: BagAlgorithm): ManifestEntry[] {
  const entries: ManifestEntry[] = [];
  for (const [i, raw] of text.split(/\r\n|\n|\r/).entries()) {
    if (raw.trim() === "") continue;
    const m = /^([0-9a-fA-F]+)[ \t]+\*?(.+)$/.exec(raw);
    if (!m) throw new BagFormatError(file, `line ${i + 1} is not "checksum path": ${JSON.stringify(raw.slice(0, 80))}`);
    if (m[1].length !== HEX_LENGTH[algorithm]) {
      throw new BagFormatError(file, `line ${i + 1}: a ${algorithm} checksum has ${HEX_LENGTH[algorithm]} hex digits, got ${m[1].length}`);
    }
    entries.push({ digest: m[1].toLowerCase(), path: decodeBagPath(m[2]) });
  }
  return entries;
}

export function formatManifest(entries: readonly ManifestEntry[]): string {
  return entries.map((e) => `${e.digest}  ${encodeBagPath(e.path)}\n`).join("");
}

/** Labels and values of bagit.txt / bag-info.txt; a line starting with white space continues the one before (§2.2.2). */
export function parseTagFile(text: string, file: string): [string, string][] {
  const out: [string, string][] = [];
  for (const [i, line] of text.split(/\r\n|\n|\r/).entries()) {
    if (line.trim() === "") continue;
    if (/^[ \t]/.test(line)) {
      if (out.length === 0) throw new BagFormatError(file, `line ${i + 1} continues nothing`);
      out[out.length - 1][1] += ` ${line.trim()}`;
      continue;
    }
    const colon = line.indexOf(":");
    if (colon <= 0) throw new BagFormatError(file, `line ${i + 1} is not "Label: value"`);
    out.push([line.slice(0, colon).trim(), line.slice(colon + 1).trim()]);
  }
  return out;
}

export function formatTagFile(fields: readonly [string, string][]): string {
  return fields.map(([label, value]) => `${label}: ${value.replace(/\r\n|\n|\r/g, " ")}\n`).join("");
}

/** RFC 8493 §2.1.1: BagIt-Version first, then Tag-File-Character-Encoding. */
export function bagitTxt(): string {
  return formatTagFile([
    ["BagIt-Version", BAGIT_VERSION],
    ["Tag-File-Character-Encoding", "UTF-8"],
  ]);
}

export interface Oxum {
  octets: number;
  streams: number;
}

/** Payload-Oxum (§2.2.2): "octetcount.streamcount". */
export function parseOxum(value: string): Oxum | null {
  const m = /^(\d+)\.(\d+)$/.exec(value.trim());
  return m ? { octets: Number(m[1]), streams: Number(m[2]) } : null;
}

/** What the CLI found in a bag, for the judgement below. */
export interface BagObservation {
  bagit: [string, string][] | null;
  bagInfo: [string, string][] | null;
  /** Payload manifests by algorithm. */
  manifests: Map<BagAlgorithm, ManifestEntry[]>;
  tagManifests: Map<BagAlgorithm, ManifestEntry[]>;
  /** Every file under data/ (paths relative to the bag, forward slashes) with its size. */
  payload: Map<string, number>;
  /** Digest of each listed file that exists, by algorithm then path; null where it could not be read. */
  digests: Map<BagAlgorithm, Map<string, string | null>>;
  /** Tag files present (relative paths), for "listed in a tag manifest but absent". */
  tagFiles: Set<string>;
}

export interface BagProblem {
  kind: "invalid" | "missing" | "extra" | "changed" | "unreadable" | "oxum";
  path: string | null;
  message: string;
}

export interface BagVerdict {
  valid: boolean;
  algorithms: BagAlgorithm[];
  payloadFiles: number;
  payloadBytes: number;
  problems: BagProblem[];
}

/** Judges a bag per RFC 8493 §3 (validity) from an observation. */
export function judgeBag(o: BagObservation): BagVerdict {
  const problems: BagProblem[] = [];
  const add = (kind: BagProblem["kind"], path: string | null, message: string): void => void problems.push({ kind, path, message });

  if (!o.bagit) add("invalid", "bagit.txt", "bagit.txt is missing: not a bag");
  else {
    const labels = o.bagit.map(([l]) => l);
    if (labels[0] !== "BagIt-Version" || labels[1] !== "Tag-File-Character-Encoding") {
      add("invalid", "bagit.txt", "bagit.txt must hold BagIt-Version then Tag-File-Character-Encoding (RFC 8493 §2.1.1)");
    }
  }
  if (o.manifests.size === 0) add("invalid", null, "no payload manifest (manifest-<algorithm>.txt)");

  // Every payload file in every payload manifest (§3); every listed file present, with its digest.
  for (const [algorithm, entries] of o.manifests) {
    const listed = new Set<string>();
    for (const e of entries) {
      if (!e.path.startsWith("data/")) add("invalid", e.path, `manifest-${algorithm}.txt lists ${e.path}, outside the payload folder data/`);
      listed.add(e.path);
      if (!o.payload.has(e.path)) {
        add("missing", e.path, `listed in manifest-${algorithm}.txt but not in the bag`);
        continue;
      }
      const now = o.digests.get(algorithm)?.get(e.path);
      if (now === null || now === undefined) add("unreadable", e.path, `could not be read to compute its ${algorithm}`);
      else if (now !== e.digest) add("changed", e.path, `${algorithm} is ${now}, manifest-${algorithm}.txt says ${e.digest}`);
    }
    for (const path of o.payload.keys()) if (!listed.has(path)) add("extra", path, `in data/ but not listed in manifest-${algorithm}.txt`);
  }

  for (const [algorithm, entries] of o.tagManifests) {
    for (const e of entries) {
      if (!o.tagFiles.has(e.path)) {
        add("missing", e.path, `listed in tagmanifest-${algorithm}.txt but not in the bag`);
        continue;
      }
      const now = o.digests.get(algorithm)?.get(e.path);
      if (now === null || now === undefined) add("unreadable", e.path, `could not be read to compute its ${algorithm}`);
      else if (now !== e.digest) add("changed", e.path, `${algorithm} is ${now}, tagmanifest-${algorithm}.txt says ${e.digest}`);
    }
  }

  let payloadBytes = 0;
  for (const size of o.payload.values()) payloadBytes += size;
  const oxumText = o.bagInfo?.find(([l]) => l.toLowerCase() === "payload-oxum")?.[1];
  if (oxumText !== undefined) {
    const oxum = parseOxum(oxumText);
    if (!oxum) add("oxum", "bag-info.txt", `Payload-Oxum "${oxumText}" is not octets.streams`);
    else if (oxum.octets !== payloadBytes || oxum.streams !== o.payload.size) {
      add("oxum", "bag-info.txt", `Payload-Oxum says ${oxum.octets} bytes in ${oxum.streams} files, the payload has ${payloadBytes} bytes in ${o.payload.size}`);
    }
  }

  return {
    valid: problems.length === 0,
    algorithms: [...o.manifests.keys()],
    payloadFiles: o.payload.size,
    payloadBytes,
    problems,
  };
}
