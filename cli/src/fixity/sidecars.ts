/**
 * Finds the checksums a file is expected to have: sidecars next to it (`tape.wav.md5`, `.sha1`, `.sha256`,
 * `.sha512`) and lines of manifests given with `--checksums FILE` (md5sum/sha256sum output; names relative
 * to the manifest's folder). Also lists expectations whose file is gone, so a scan or verify can say a
 * delivery is incomplete instead of staying silent.
 */
import { readdir, readFile, stat } from "node:fs/promises";
import path from "node:path";
import {
  ChecksumFileError,
  parseChecksumManifest,
  parseSidecar,
  SIDECAR_EXTENSIONS,
  type ChecksumAlgorithm,
  type ExpectedChecksum,
} from "@tidemark/shared/fixity/checksumFiles";
import { UsageError } from "../errors.ts";

export interface OrphanChecksum {
  /** The file the checksum is for, absolute. */
  absPath: string;
  source: string;
}

export interface ExpectedChecksums {
  /** By absolute path of the audio file. */
  byFile: Map<string, ExpectedChecksum[]>;
  /** Sidecars and manifest lines whose file does not exist. */
  orphans: OrphanChecksum[];
  /** Sidecars that could not be read or parsed: said, not fatal. */
  warnings: string[];
}

const SIDECAR_RE = new RegExp(`(${Object.keys(SIDECAR_EXTENSIONS).map((e) => e.replace(".", "\\.")).join("|")})$`, "i");

async function exists(file: string): Promise<boolean> {
  return (await stat(file).catch(() => null)) !== null;
}

/** Every sidecar file under the roots (folders walked; a root that is a file brings its own sidecars). */
async function findSidecars(roots: readonly string[]): Promise<string[]> {
  const out: string[] = [];
  for (const root of roots) {
    const s = await stat(root).catch(() => null);
    if (s?.isDirectory()) {
      const names = await readdir(root, { recursive: true }).catch(() => [] as string[]);
      for (const name of names) if (SIDECAR_RE.test(name)) out.push(path.join(root, name));
    } else if (s?.isFile()) {
      for (const ext of Object.keys(SIDECAR_EXTENSIONS)) if (await exists(root + ext)) out.push(root + ext);
    }
  }
  return [...new Set(out)].sort();
}

/**
 * `files`: the audio files the command will check (absolute). `roots`: the paths it was given (absolute).
 * `manifests`: the --checksums files (absolute).
 */
export async function expectedChecksums(files: readonly string[], roots: readonly string[], manifests: readonly string[], shown: (abs: string) => string): Promise<ExpectedChecksums> {
  const wanted = new Set(files);
  const byFile = new Map<string, ExpectedChecksum[]>();
  const orphans: OrphanChecksum[] = [];
  const warnings: string[] = [];
  const add = (abs: string, e: ExpectedChecksum): void => void (byFile.get(abs) ?? byFile.set(abs, []).get(abs)!).push(e);

  for (const sidecar of await findSidecars(roots)) {
    const ext = SIDECAR_RE.exec(sidecar)![1].toLowerCase();
    const algorithm = SIDECAR_EXTENSIONS[ext] as ChecksumAlgorithm;
    const audio = sidecar.slice(0, -ext.length);
    const source = shown(sidecar);
    if (!wanted.has(audio)) {
      // A sidecar of a file that is there but not audio (notes.txt.md5) is none of our business.
      if (!(await exists(audio))) orphans.push({ absPath: audio, source });
      continue;
    }
    try {
      add(audio, parseSidecar(await readFile(sidecar, "utf8"), source, algorithm, path.basename(audio)));
    } catch (error) {
      warnings.push(error instanceof ChecksumFileError ? error.message : `${source}: cannot be read (${(error as { code?: string }).code ?? String(error)})`);
    }
  }

  for (const manifest of manifests) {
    let text: string;
    try {
      text = await readFile(manifest, "utf8");
    } catch (error) {
      throw new UsageError(`cannot read --checksums ${shown(manifest)}: ${(error as { code?: string }).code ?? String(error)}`);
    }
    let lines;
    try {
      lines = parseChecksumManifest(text, shown(manifest));
    } catch (error) {
      throw new UsageError(error instanceof Error ? error.message : String(error));
    }
    for (const line of lines) {
      const abs = path.resolve(path.dirname(manifest), line.name);
      if (wanted.has(abs)) add(abs, line.expected);
      else if (!(await exists(abs))) orphans.push({ absPath: abs, source: line.expected.source });
    }
  }
  return { byFile, orphans, warnings };
}
