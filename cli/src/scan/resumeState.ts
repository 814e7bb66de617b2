/**
 * The --resume state file: JSON lines appended after each finished file, so a kill (even SIGKILL) loses
 * at most the files in flight. The first line records what the results depend on (profile hash and
 * spectrogram folder); a torn last line from a kill mid-write is ignored.
 */
import { closeSync, openSync, readFileSync, writeSync } from "node:fs";
import path from "node:path";
import type { FileReport } from "@tidemark/shared/types/report";
import { UsageError } from "../errors.ts";
import { fileKey } from "./rawPath.ts";

export const RESUME_STATE_KIND = "tidemark.resume/1";

export interface ResumeHeader {
  kind: typeof RESUME_STATE_KIND;
  profileName: string;
  profileHash: string;
  /** Folder the PNGs went to (as given), or null. */
  spectrogramDir: string | null;
}

export interface ResumeRecord {
  kind: "file";
  relPath: string;
  /** Exact bytes of a name that is not UTF-8 (rawPath.ts); records are keyed on them when present. */
  pathBytes?: string;
  sizeBytes: number;
  mtimeMs: number;
  report: FileReport;
}

export interface ResumeState {
  /** Records by fileKey (path, or exact bytes for a name that is not UTF-8); a later line for the same file wins. */
  records: Map<string, ResumeRecord>;
  /** Appends one finished file; synchronous so it is on disk before the next file is taken. */
  append(record: ResumeRecord): void;
  close(): void;
}

interface ExistingState {
  header: ResumeHeader | null;
  records: Map<string, ResumeRecord>;
  /** False when a kill tore the last line: the next record must start on a fresh line. */
  endsWithNewline: boolean;
}

function readExisting(file: string): ExistingState {
  let text: string;
  try {
    text = readFileSync(file, "utf8");
  } catch (error) {
    if ((error as { code?: string }).code === "ENOENT") return { header: null, records: new Map(), endsWithNewline: true };
    throw new UsageError(`cannot read resume state ${file}: ${(error as { code?: string }).code ?? String(error)}`);
  }
  const lines = text.split("\n").filter((l) => l.trim() !== "");
  const endsWithNewline = text.length === 0 || text.endsWith("\n");
  if (lines.length === 0) return { header: null, records: new Map(), endsWithNewline };
  let header: ResumeHeader;
  try {
    header = JSON.parse(lines[0]) as ResumeHeader;
  } catch {
    header = { kind: "?" } as unknown as ResumeHeader;
  }
  if (header.kind !== RESUME_STATE_KIND) {
    throw new UsageError(`${file} is not a tidemark resume state (expected a first line of kind "${RESUME_STATE_KIND}")`);
  }
  const records = new Map<string, ResumeRecord>();
  for (const line of lines.slice(1)) {
    try {
      const record = JSON.parse(line) as ResumeRecord;
      if (record.kind === "file" && typeof record.relPath === "string") records.set(fileKey(record), record);
    } catch {
      // A line torn by a kill mid-write: that file is simply measured again.
    }
  }
  return { header, records, endsWithNewline };
}

export function openResumeState(file: string, expected: Omit<ResumeHeader, "kind">): ResumeState {
  const { header, records, endsWithNewline } = readExisting(file);
  if (header) {
    if (header.profileHash !== expected.profileHash) {
      throw new UsageError(
        `${file} was written with profile ${header.profileName} (hash ${header.profileHash.slice(0, 12)}…), ` +
          `this scan uses ${expected.profileName} (${expected.profileHash.slice(0, 12)}…): use another state file or the same profile`,
      );
    }
    if (header.spectrogramDir !== expected.spectrogramDir) {
      throw new UsageError(
        `${file} was written with --spectrograms ${header.spectrogramDir ?? "(none)"}, this scan uses ${expected.spectrogramDir ?? "(none)"}: use another state file`,
      );
    }
  }
  let fd: number;
  try {
    fd = openSync(path.resolve(file), "a");
  } catch (error) {
    throw new UsageError(`cannot write resume state ${file}: ${(error as { code?: string }).code ?? String(error)}`);
  }
  const writeLine = (value: unknown): void => {
    // One write call a line: a kill leaves whole lines plus at most one torn tail.
    writeSync(fd, `${JSON.stringify(value)}\n`);
  };
  if (!header) writeLine({ kind: RESUME_STATE_KIND, ...expected } satisfies ResumeHeader);
  else if (!endsWithNewline) writeSync(fd, "\n");
  return {
    records,
    append: (record) => writeLine(record),
    close: () => closeSync(fd),
  };
}
