/**
 * The examples are real programs: synthesise the Harbourside demo archive, run examples/scan-folder.sh on
 * it, and check that each deliberate fault is found where it was put, and that the committed
 * examples/sample-report.json still matches what the CLI writes.
 */
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { Ajv2020 } from "ajv/dist/2020.js";
import { execa } from "execa";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFingerprintIndex, decodeFingerprint, isSameRecording } from "../shared/src/fingerprint/index.ts";
import type { ScanReport } from "../shared/src/types/report.ts";

const root = path.resolve(import.meta.dirname, "..");
const readJson = <T>(file: string): T => JSON.parse(readFileSync(file, "utf8")) as T;

let dir: string;
let report: ScanReport;
let stdout: string;

const ajv = new Ajv2020({ allErrors: true, strict: true });
ajv.addFormat("date-time", true);
const validate = ajv.compile(readJson(path.join(root, "shared/schema/report.schema.json")));

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-examples-"));
  const run = await execa("bash", [path.join(root, "examples/scan-folder.sh"), path.join(dir, "archive"), path.join(dir, "out")], {
    env: { FORCE_COLOR: "0", TIDEMARK_CONFIG_DIR: path.join(dir, "config"), TIDEMARK_SPOOL_DIR: path.join(dir, "spool") },
    reject: false,
  });
  expect(run.stderr).not.toMatch(/\n\s+at /);
  expect(run.exitCode, run.stderr).toBe(0);
  stdout = run.stdout;
  report = readJson<ScanReport>(path.join(dir, "out/report.json"));
}, 180_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

const file = (name: string) => {
  const f = report.files.find((x) => x.path.endsWith(name));
  if (!f) throw new Error(`no ${name} in the demo report`);
  return f;
};
const codes = (name: string, severity?: string) =>
  file(name)
    .findings.filter((f) => !severity || f.severity === severity)
    .map((f) => f.code);

describe("examples/scan-folder.sh on the demo archive", () => {
  it("prints the table, then a clean fixity check", () => {
    expect(stdout).toMatch(/VERDICT\s+PATH/);
    expect(stdout).toContain("9 file(s):");
    expect(stdout).toMatch(/9 unchanged, 0 changed, 0 missing, 0 unreadable, 0 new/);
  });

  it("writes a report that validates against report.schema.json (ajv), with spectrograms", () => {
    expect(validate(report), JSON.stringify(validate.errors)).toBe(true);
    expect(report.profile.name).toBe("preservation-master");
    expect(report.files).toHaveLength(9);
    expect(report.files.every((f) => f.spectrogram?.endsWith(`${f.path}.png`))).toBe(true);
  });

  it("finds each deliberate fault in the file it was put in", () => {
    expect(codes("LCR-02 reel 1 side B.wav", "fail")).toContain("clipping");
    expect(codes("FTI-02 ticket office.bwf")).toContain("hum");
    expect(codes("FTI-03 night shift.wav")).toContain("dropout");
    // Issue #16's demo: a 40 ms dropout at 2:00 of a 4-minute interview, with a close-up 2 s either side of it.
    const long = file("FTI-05 pier master (long).wav");
    expect(long.format?.durationSeconds).toBe(240);
    const dropout = long.findings.findIndex((f) => f.code === "dropout");
    expect(long.findings[dropout].startSeconds).toBeCloseTo(120, 3);
    expect(long.closeups?.find((c) => c.findings.includes(dropout))).toMatchObject({ startSeconds: 118, endSeconds: 122.04 });
    expect(codes("FTI-04 deckhands (access copy).wav")).toContain("band-limited");
    // IASA TC-04 (from memory): 48 kHz / 24-bit minimum for preservation masters.
    expect(codes("FTI-04 deckhands (access copy).wav", "fail")).toContain("format-mismatch");
    expect(codes("LCR-03 rehearsal.wav", "fail")).toContain("padded-bit-depth");
    expect(file("LCR-03 rehearsal.wav").metrics?.effectiveBitDepth).toBe(16);
    expect(file("LCR-04 vigil.rf64").format?.container).toBe("rf64");
    expect(file("FTI-02 ticket office.bwf").metadata.bext?.originator).toBe("Harbourside Sound Archive");
  });

  it("finds no click in the demo: it has none planted (issue #18: no false clicks on its speech)", () => {
    for (const f of report.files) expect(f.findings.filter((x) => x.code === "click").map((x) => x.message), f.path).toEqual([]);
  });

  it("fails none of the clean transfers", () => {
    for (const name of ["FTI-01 harbourmaster.wav", "LCR-01 reel 1 side A.wav", "LCR-04 vigil.rf64"]) {
      expect(codes(name, "fail"), name).toEqual([]);
    }
  });

  it("holds one planted duplicate: LCR-04 is a second transfer of LCR-01, and no other two files match", () => {
    // The CLI's `match` and the server's ingest decide with the same index scoring and isSameRecording rule.
    const index = createFingerprintIndex();
    const fingerprints = new Map(report.files.filter((f) => typeof f.fingerprint === "string").map((f) => [f.path, decodeFingerprint(f.fingerprint!)]));
    expect(fingerprints.size).toBe(9);
    for (const [p, fp] of fingerprints) index.add(p, fp);
    const pairs = new Set<string>();
    for (const [p, fp] of fingerprints) {
      for (const m of index.lookup(fp)) {
        if (m.id !== p && isSameRecording(m.score, fp.hashes.length, fingerprints.get(m.id)!.hashes.length)) pairs.add([p, m.id].sort().join(" = "));
      }
    }
    expect([...pairs]).toEqual(["Lighthouse Choir Reels/LCR-01 reel 1 side A.wav = Lighthouse Choir Reels/LCR-04 vigil.rf64"]);
  });

  it("matches the committed examples/sample-report.json in files, verdicts and finding codes", () => {
    const sample = readJson<ScanReport>(path.join(root, "examples/sample-report.json"));
    expect(validate(sample), JSON.stringify(validate.errors)).toBe(true);
    const shape = (r: ScanReport) => r.files.map((f) => ({ path: f.path, verdict: f.verdict, codes: [...new Set(f.findings.map((x) => x.code))].sort() }));
    expect(shape(sample)).toEqual(shape(report));
    expect(sample.summary).toEqual(report.summary);
  });
});
