/**
 * A densely damaged FLAC must scan to the end (product rule: bad input gets findings, never a hang). The audio is
 * made with Debian's sox (`synth pinknoise`, 48 kHz / 24-bit stereo) and encoded with Debian's flac; one byte in
 * every 48501 is flipped (≈ 700 damaged frames). Before the fix libFLAC's fixed 16 MB WebAssembly heap ran out
 * after some hundreds of gaps and the scan spun forever (cli/src/audio/flacStreamDecoder.ts, restartLibflac);
 * the child process is therefore killed after a bound, so a regression fails instead of hanging the suite.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { binPath, isolatedEnv } from "./runCli.ts";

const hasTools = ["flac", "sox"].every((t) => spawnSync(t, ["--version"], { stdio: "ignore" }).status === 0);
const SECONDS = 300;
const dir = mkdtempSync(path.join(tmpdir(), "tidemark-flac-dense-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe.skipIf(!hasTools)("densely damaged FLAC", () => {
  it("scans to the end within a bound, with decode-error findings and the full duration", () => {
    const wav = path.join(dir, "noise.wav");
    const file = path.join(dir, "damaged.flac");
    expect(spawnSync("sox", ["-n", "-r", "48000", "-b", "24", "-c", "2", wav, "synth", String(SECONDS), "pinknoise", "gain", "-20"]).status).toBe(0);
    expect(spawnSync("flac", ["-s", "-f", wav, "-o", file]).status).toBe(0);
    rmSync(wav);
    const b = readFileSync(file);
    let damaged = 0;
    for (let p = 200_000; p < b.length; p += 48_501, damaged++) b[p] ^= 0x5a;
    writeFileSync(file, b);
    expect(damaged).toBeGreaterThan(600);
    const out = path.join(dir, "report.json");
    const started = Date.now();
    const r = spawnSync("node", [binPath, "scan", file, "-w", "1", "-f", "json", "-o", out], {
      env: { ...process.env, ...isolatedEnv(), FORCE_COLOR: "0" },
      timeout: 90_000,
      killSignal: "SIGKILL",
    });
    // Unfixed, the scan never ends: the kill leaves status null.
    expect(r.status, `scan did not finish in 90 s (${Date.now() - started} ms)`).toBe(1);
    const report = JSON.parse(readFileSync(out, "utf8")) as { files: { error: unknown; format: { durationSeconds: number }; findings: { code: string; message: string }[] }[] };
    const f = report.files[0];
    expect(f.error).toBeNull();
    expect(f.format.durationSeconds).toBeCloseTo(SECONDS, 6);
    const errors = f.findings.filter((x) => x.code === "decode-error");
    expect(errors.length).toBe(50);
    expect(errors[errors.length - 1].message).toMatch(/more decode errors not listed/);
    // Every damaged frame is reported as lost, none as libFLAC's own missing-frame complaint.
    expect(f.findings.some((x) => /MISSING_FRAME/.test(x.message))).toBe(false);
  }, 180_000);
});
