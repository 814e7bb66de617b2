import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, expect } from "vitest";
import { loadProfile } from "../../cli/src/profiles/loadProfile.ts";
import { analyseFile, type ScanContext } from "../../cli/src/scan/analyseFile.ts";
import { fileReportSchema, type FileReport } from "../../shared/src/types/report.ts";

/**
 * A throwaway folder for one test file's inputs and an in-process scan of a file in it with the
 * preservation-master profile (no images, fingerprint or close-ups), its report checked against the schema.
 * Call at a test file's top level: it registers the folder's beforeAll / afterAll.
 */
export function scanFolder(prefix: string): { file: (name: string) => string; scan: (name: string) => Promise<FileReport> } {
  let dir = "";
  let context: ScanContext;
  beforeAll(async () => {
    dir = mkdtempSync(path.join(tmpdir(), `tidemark-${prefix}-`));
    const loaded = await loadProfile("preservation-master", dir);
    context = { profile: loaded.profile, settings: loaded.settings, spectrograms: null, fingerprint: false, closeups: false };
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const file = (name: string): string => path.join(dir, name);
  const scan = async (name: string): Promise<FileReport> => {
    const { report } = await analyseFile({ absPath: file(name), relPath: name, sizeBytes: 0 }, context);
    expect(fileReportSchema.safeParse(JSON.parse(JSON.stringify(report))).success).toBe(true);
    return report;
  };
  return { file, scan };
}
