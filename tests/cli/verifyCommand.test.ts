/** Fixity with the real binary: `tidemark verify` against an earlier scan's report finds a one-byte change. */
import { createHash } from "node:crypto";
import { mkdirSync, mkdtempSync, readFileSync, renameSync, rmSync, unlinkSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import type { FixityComparison } from "../../cli/src/commands/verify.ts";
import { isolatedEnv, runCli } from "./runCli.ts";

let dir: string;
const env = isolatedEnv();
const cli = (args: string[]) => runCli(args, { cwd: dir, env });
const wav = (hz: number) => encodeWav([sine({ frequencyHz: hz, sampleRateHz: 48000, seconds: 0.5, peakDbfs: -12 })], { sampleRateHz: 48000, bitDepth: 24 });

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-verify-"));
  mkdirSync(path.join(dir, "choir", "reel-2"), { recursive: true });
  writeFileSync(path.join(dir, "choir", "reel-1.wav"), wav(220));
  writeFileSync(path.join(dir, "choir", "reel-2", "take-1.wav"), wav(330));
  writeFileSync(path.join(dir, "choir", "reel-2", "take-2.wav"), wav(440));
  const scan = await cli(["scan", "choir", "--out", "before.json", "-q", "-w", "1"]);
  expect(scan.exitCode).toBe(0);
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("tidemark verify (real binary)", () => {
  it("finds nothing changed right after the scan", async () => {
    const r = await cli(["verify", "choir", "--against", "before.json"]);
    expect(r.stdout).toBe("3 unchanged, 0 changed, 0 missing, 0 unreadable, 0 new, 0 moved (against before.json)");
    expect(r.exitCode).toBe(0);
  });

  it("finds a one-byte change, a missing and a new file, and exits 1", async () => {
    const victim = path.join(dir, "choir", "reel-2", "take-1.wav");
    const bytes = readFileSync(victim);
    bytes[bytes.length - 100] ^= 0x01;
    writeFileSync(victim, bytes);
    unlinkSync(path.join(dir, "choir", "reel-2", "take-2.wav"));
    writeFileSync(path.join(dir, "choir", "reel-3.wav"), wav(550));

    const r = await cli(["verify", "choir", "--against", "before.json", "--json"]);
    expect(r.exitCode).toBe(1);
    const c = JSON.parse(r.stdout) as FixityComparison;
    const earlier = JSON.parse(readFileSync(path.join(dir, "before.json"), "utf8")) as { files: { path: string; sha256: string }[] };
    expect(c.changed).toEqual([
      {
        path: "reel-2/take-1.wav",
        expectedSha256: earlier.files.find((f) => f.path === "reel-2/take-1.wav")!.sha256,
        // The new hash is node:crypto's over the changed bytes.
        actualSha256: createHash("sha256").update(bytes).digest("hex"),
      },
    ]);
    expect(c.missing).toEqual(["reel-2/take-2.wav"]);
    expect(c.new).toEqual(["reel-3.wav"]);
    expect(c.unchanged).toEqual(["reel-1.wav"]);

    const text = await cli(["verify", "choir", "--against", "before.json"]);
    expect(text.stdout).toMatch(/^changed {5}reel-2\/take-1\.wav {2}\(sha256 was [0-9a-f]{16}…, now [0-9a-f]{16}…\)$/m);
    expect(text.stdout).toMatch(/^missing {5}reel-2\/take-2\.wav$/m);
    expect(text.stdout).toMatch(/^new {9}reel-3\.wav$/m);
  });

  it("matches the same files from another folder, and checks a sub-folder without calling the rest missing", async () => {
    const fromElsewhere = await runCli(["verify", path.join(dir, "choir"), "--against", path.join(dir, "before.json"), "--json"], { cwd: tmpdir(), env });
    const c = JSON.parse(fromElsewhere.stdout) as FixityComparison;
    expect(c.unchanged).toEqual(["reel-1.wav"]);
    expect(c.changed.map((x) => x.path)).toEqual(["reel-2/take-1.wav"]);
    expect(c.missing).toEqual(["reel-2/take-2.wav"]);

    const sub = await cli(["verify", "choir/reel-2", "--against", "before.json", "--json"]);
    const s = JSON.parse(sub.stdout) as FixityComparison;
    expect(s.changed.map((x) => x.path)).toEqual(["take-1.wav"]);
    expect(s.missing).toEqual(["reel-2/take-2.wav"]);
    expect(s.new).toEqual([]);
    expect(s.unchanged).toEqual([]);
  });

  it("reports a file moved to another folder as moved (same SHA-256), not missing plus new", async () => {
    renameSync(path.join(dir, "choir", "reel-1.wav"), path.join(dir, "choir", "reel-2", "reel-1 (moved).wav"));
    const r = await cli(["verify", "choir", "--against", "before.json", "--json"]);
    const c = JSON.parse(r.stdout) as FixityComparison;
    expect(c.moved).toEqual([{ from: "reel-1.wav", to: "reel-2/reel-1 (moved).wav" }]);
    expect(c.missing).toEqual(["reel-2/take-2.wav"]);
    expect(c.new).toEqual(["reel-3.wav"]);
    const text = await cli(["verify", "choir", "--against", "before.json"]);
    expect(text.stdout).toMatch(/^moved {7}reel-1\.wav → reel-2\/reel-1 \(moved\)\.wav {2}\(same SHA-256\)$/m);
  });

  it("refuses a file that is not a report, naming the bad field, with exit 2", async () => {
    writeFileSync(path.join(dir, "not-a-report.json"), JSON.stringify({ schema: "tidemark.report/1", files: [] }));
    const r = await cli(["verify", "choir", "--against", "not-a-report.json"]);
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/^tidemark: not-a-report\.json is not a tidemark report: tool: expected object, received undefined$/);
  });
});
