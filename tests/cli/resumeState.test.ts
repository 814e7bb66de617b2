import { appendFileSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import { errorReport } from "../../cli/src/scan/errorReport.ts";
import { openResumeState, RESUME_STATE_KIND } from "../../cli/src/scan/resumeState.ts";

let dir: string;
let file: string;
const header = { profileName: "access-copy", profileHash: "c".repeat(64), spectrogramDir: null };
const record = (relPath: string, sizeBytes = 100) => ({
  kind: "file" as const,
  relPath,
  sizeBytes,
  mtimeMs: 1_700_000_000_000,
  report: errorReport(relPath, sizeBytes, { code: "not-riff", message: `${relPath}: expected RIFF` }),
});

beforeEach(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-resume-"));
  file = path.join(dir, "state.jsonl");
});
afterEach(() => rmSync(dir, { recursive: true, force: true }));

describe("resume state (JSON lines)", () => {
  it("writes a header, then one parseable line a file, and reads them back", () => {
    const state = openResumeState(file, header);
    state.append(record("a.wav"));
    state.append(record("b.wav"));
    state.close();
    // Each line must parse on its own with the platform's JSON.parse (JSON Lines: one value a line).
    const lines = readFileSync(file, "utf8").trimEnd().split("\n").map((l) => JSON.parse(l));
    expect(lines[0]).toEqual({ kind: RESUME_STATE_KIND, ...header });
    expect(lines.slice(1).map((l) => l.relPath)).toEqual(["a.wav", "b.wav"]);
    const again = openResumeState(file, header);
    expect([...again.records.keys()]).toEqual(["a.wav", "b.wav"]);
    expect(again.records.get("b.wav")).toEqual(record("b.wav"));
    again.close();
  });

  it("ignores a line torn by a kill and starts the next record on a fresh line", () => {
    const state = openResumeState(file, header);
    state.append(record("a.wav"));
    state.close();
    appendFileSync(file, JSON.stringify(record("b.wav")).slice(0, 40));
    const resumed = openResumeState(file, header);
    expect([...resumed.records.keys()]).toEqual(["a.wav"]);
    resumed.append(record("c.wav"));
    resumed.close();
    const final = openResumeState(file, header);
    expect([...final.records.keys()]).toEqual(["a.wav", "c.wav"]);
    final.close();
  });

  it("lets a later record of the same path win", () => {
    const state = openResumeState(file, header);
    state.append(record("a.wav", 1));
    state.append(record("a.wav", 2));
    state.close();
    const again = openResumeState(file, header);
    expect(again.records.get("a.wav")?.sizeBytes).toBe(2);
    again.close();
  });

  it("refuses a state written with another profile or spectrogram folder, naming both", () => {
    openResumeState(file, header).close();
    expect(() => openResumeState(file, { ...header, profileName: "broadcast-loudness", profileHash: "d".repeat(64) })).toThrow(
      /written with profile access-copy \(hash cccccccccccc…\), this scan uses broadcast-loudness \(dddddddddddd…\)/,
    );
    expect(() => openResumeState(file, { ...header, spectrogramDir: "png" })).toThrow(/--spectrograms \(none\), this scan uses png/);
  });

  it("refuses a file that is not a resume state", () => {
    writeFileSync(file, '{"schema":"tidemark.report/1"}\n');
    expect(() => openResumeState(file, header)).toThrow(`${file} is not a tidemark resume state (expected a first line of kind "${RESUME_STATE_KIND}")`);
  });
});
