/**
 * Validates XML against a published schema with Debian's xmllint (libxml2-utils). The schemas live beside
 * the repository in ../shared/reference (see its README for their sources), as in CI.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");
export const REFERENCE_DIR = path.resolve(repoRoot, "..", "shared", "reference");

/** xmllint's verdict on `xml` against the named schema file of ../shared/reference. */
export function validateWithXmllint(xml: string, schemaFile: string): { valid: boolean; output: string } {
  const dir = mkdtempSync(path.join(tmpdir(), "tidemark-xmllint-"));
  try {
    const file = path.join(dir, "doc.xml");
    writeFileSync(file, xml);
    const r = spawnSync("xmllint", ["--noout", "--schema", path.join(REFERENCE_DIR, schemaFile), file], { encoding: "utf8" });
    if (r.error) throw new Error(`xmllint could not run (install Debian's libxml2-utils): ${r.error.message}`);
    return { valid: r.status === 0, output: `${r.stdout}${r.stderr}` };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
