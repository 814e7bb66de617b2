/**
 * An unreadable file (chmod 000) must give verdict `error` with code `permission-denied`, while the file
 * beside it is measured. Root reads any file (CAP_DAC_OVERRIDE), and CI runs as root, so there the scan
 * runs as the unprivileged user `nobody` through setpriv; as any other user it runs as that user.
 */
import { spawnSync } from "node:child_process";
import { chmodSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { execa } from "execa";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { ScanReport } from "../../shared/src/types/report.ts";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { binPath, isolatedEnv } from "./runCli.ts";

const isRoot = process.getuid?.() === 0;
const NOBODY = 65534;
/** As root, run the CLI as `nobody`; otherwise as ourselves. */
const asUser = (cmd: string[]): string[] =>
  isRoot ? ["setpriv", `--reuid=${NOBODY}`, `--regid=${NOBODY}`, "--clear-groups", ...cmd] : cmd;

let dir: string;

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-unreadable-"));
  chmodSync(dir, 0o755); // nobody must be able to list the folder, just not read the one file
  const tone = sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: 1, peakDbfs: -12 });
  writeFileSync(path.join(dir, "readable.wav"), encodeWav([tone], { sampleRateHz: 48000, bitDepth: 24 }));
  writeFileSync(path.join(dir, "unreadable.wav"), encodeWav([tone], { sampleRateHz: 48000, bitDepth: 24 }));
  chmodSync(path.join(dir, "readable.wav"), 0o644);
  chmodSync(path.join(dir, "unreadable.wav"), 0o000);
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

// The checkout itself must be readable by `nobody` for the CLI to start as that user.
const canRunAsNobody = !isRoot || spawnSync(asUser(["test", "-r", binPath])[0], asUser(["test", "-r", binPath]).slice(1)).status === 0;

describe.runIf(canRunAsNobody)("a file the scanning user may not read", () => {
  it("gets verdict error with code permission-denied, and the file beside it is measured", async () => {
    const env = isolatedEnv();
    const [cmd, ...args] = asUser(["node", binPath, "scan", dir, "--format", "json", "--workers", "1"]);
    // nobody has no home: keep every cache and config inside the world-writable temp dir.
    const r = await execa(cmd, args, {
      cwd: dir,
      env: { ...env, HOME: tmpdir(), FORCE_COLOR: "0", TIDEMARK_CONFIG_DIR: path.join(dir, ".cfg"), TIDEMARK_SPOOL_DIR: path.join(dir, ".spool") },
      reject: false,
      stdin: "ignore",
      timeout: 60_000,
    });
    // README's exit-code table: 3 = a file could not be read and none failed.
    expect(r.exitCode, String(r.stderr)).toBe(3);
    const report = JSON.parse(String(r.stdout)) as ScanReport;
    const byPath = new Map(report.files.map((f) => [f.path, f]));
    expect(byPath.get("unreadable.wav")?.verdict).toBe("error");
    expect(byPath.get("unreadable.wav")?.error).toEqual({ code: "permission-denied", message: "unreadable.wav: permission denied" });
    expect(byPath.get("readable.wav")?.error).toBeNull();
    expect(byPath.get("readable.wav")?.metrics?.samplePeakDbfs).toBeCloseTo(-12, 1);
    expect(String(r.stderr)).not.toMatch(/^\s+at /m); // no stack trace
  });
});
