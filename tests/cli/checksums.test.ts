/**
 * Checksum sidecars and manifests with the real binary. The expected values are written by Debian's
 * coreutils (md5sum, sha1sum, sha256sum, in their plain and --tag forms), so the parser is checked
 * against the tool archives use, and the digests of our reader against coreutils' own.
 */
import { execFileSync } from "node:child_process";
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { parseChecksumLine, parseSidecar } from "../../shared/src/fixity/checksumFiles.ts";
import type { ScanReport } from "../../shared/src/types/report.ts";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { isolatedEnv, runCli } from "./runCli.ts";

let dir: string;
const env = isolatedEnv({ TIDEMARK_NO_CONFIG: "1" });
const cli = (args: string[]) => runCli(args, { cwd: dir, env });
const wav = (hz: number) => encodeWav([sine({ frequencyHz: hz, sampleRateHz: 48000, seconds: 0.5, peakDbfs: -12 })], { sampleRateHz: 48000, bitDepth: 24 });
const tool = (name: string, args: string[], cwd: string) => execFileSync(name, args, { cwd, encoding: "utf8" });

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-checksums-"));
  const day = path.join(dir, "delivery");
  mkdirSync(day, { recursive: true });
  for (const [name, hz] of [["a.wav", 220], ["b.wav", 330], ["c.wav", 440]] as const) writeFileSync(path.join(day, name), wav(hz));
  // Sidecars as a vendor writes them: md5sum's own line, a bare SHA-256, and a SHA-1 of another file's bytes.
  writeFileSync(path.join(day, "a.wav.md5"), tool("md5sum", ["a.wav"], day));
  writeFileSync(path.join(day, "b.wav.sha256"), `${tool("sha256sum", ["b.wav"], day).split(" ")[0]}\n`);
  writeFileSync(path.join(day, "c.wav.sha1"), tool("sha1sum", ["b.wav"], day).replace("b.wav", "c.wav"));
  // A sidecar whose file never arrived.
  writeFileSync(path.join(day, "d.wav.md5"), `${"0".repeat(32)}  d.wav\n`);
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("checksum lines (coreutils formats)", () => {
  it("reads plain, binary-mode, --tag and escaped lines", () => {
    const hex = "d41d8cd98f00b204e9800998ecf8427e";
    expect(parseChecksumLine(`${hex}  tape 1.wav`, "x")).toMatchObject({ name: "tape 1.wav", expected: { algorithm: "md5", digest: hex } });
    expect(parseChecksumLine(`${hex} *tape.wav`, "x")).toMatchObject({ name: "tape.wav" });
    expect(parseChecksumLine(`MD5 (tape.wav) = ${hex}`, "x")).toMatchObject({ name: "tape.wav", expected: { algorithm: "md5" } });
    expect(parseChecksumLine(`\\${hex}  a\\nb\\\\c.wav`, "x")).toMatchObject({ name: "a\nb\\c.wav" });
    expect(parseChecksumLine("# comment", "x")).toBeNull();
    expect(() => parseChecksumLine("12345  x.wav", "delivery.md5:3")).toThrow(/delivery\.md5:3: a checksum of 5 hex digits/);
    expect(() => parseSidecar(`${hex}  other.wav\n`, "tape.wav.md5", "md5", "tape.wav")).toThrow(/names "other\.wav", not "tape\.wav"/);
  });

  it("reads what coreutils --tag writes", () => {
    const day = path.join(dir, "delivery");
    const line = tool("sha256sum", ["--tag", "a.wav"], day).trim();
    const parsed = parseChecksumLine(line, "x")!;
    expect(parsed.expected.digest).toBe(tool("sha256sum", ["a.wav"], day).split(" ")[0]);
  });
});

describe("scan with sidecars and --checksums", () => {
  it("checks every sidecar in the same read, fails the mismatch and reports the file that never arrived", async () => {
    const r = await cli(["scan", "delivery", "--format", "json", "-q", "-w", "1", "-p", "access-copy"]);
    expect(r.exitCode).toBe(1);
    const report = JSON.parse(r.stdout) as ScanReport;
    const byPath = new Map(report.files.map((f) => [f.path, f]));
    const md5 = tool("md5sum", ["a.wav"], path.join(dir, "delivery")).split(" ")[0];
    expect(byPath.get("a.wav")!.checksums).toEqual([{ algorithm: "md5", source: "delivery/a.wav.md5", expected: md5, actual: md5, matches: true }]);
    expect(byPath.get("a.wav")!.verdict).toBe("pass");
    expect(byPath.get("b.wav")!.checksums?.[0]).toMatchObject({ algorithm: "sha256", matches: true });
    const c = byPath.get("c.wav")!;
    expect(c.verdict).toBe("fail");
    expect(c.checksums?.[0]).toMatchObject({ algorithm: "sha1", matches: false, actual: tool("sha1sum", ["c.wav"], path.join(dir, "delivery")).split(" ")[0] });
    expect(c.findings.find((f) => f.code === "checksum-mismatch")?.message).toMatch(/^SHA1 of the file is [0-9a-f]{40}; delivery\/c\.wav\.sha1 says [0-9a-f]{40}/);
    expect(byPath.get("d.wav")).toMatchObject({ verdict: "error", error: { code: "missing-file" } });
  });

  it("checks the lines of a --checksums manifest written by sha256sum, relative to its folder", async () => {
    const other = path.join(dir, "second");
    mkdirSync(other, { recursive: true });
    writeFileSync(path.join(other, "e.wav"), wav(550));
    writeFileSync(path.join(other, "f.wav"), wav(660));
    writeFileSync(path.join(dir, "second.sha256"), tool("sha256sum", ["second/e.wav", "second/f.wav"], dir));
    const bytes = readFileSync(path.join(other, "f.wav"));
    bytes[bytes.length - 3] ^= 0x40;
    writeFileSync(path.join(other, "f.wav"), bytes);
    const r = await cli(["scan", "second", "--checksums", "second.sha256", "--format", "json", "-q", "-w", "1", "-p", "access-copy"]);
    const report = JSON.parse(r.stdout) as ScanReport;
    expect(report.files.find((f) => f.path === "e.wav")!.checksums?.[0]).toMatchObject({ source: "second.sha256:1", matches: true });
    expect(report.files.find((f) => f.path === "f.wav")!.findings.map((f) => f.code)).toContain("checksum-mismatch");
    expect(r.exitCode).toBe(1);
  });
});

describe("verify with checksums alone", () => {
  it("needs no earlier report: mismatches and files that never arrived fail it", async () => {
    const r = await cli(["verify", "delivery"]);
    expect(r.exitCode).toBe(1);
    expect(r.stdout).toMatch(/^mismatch {4}c\.wav {2}\(sha1 is [0-9a-f]{40}, delivery\/c\.wav\.sha1 says [0-9a-f]{40}\)$/m);
    expect(r.stdout).toMatch(/^missing {5}delivery\/d\.wav {2}\(delivery\/d\.wav\.md5 has a checksum for it\)$/m);
    expect(r.stdout).toMatch(/against checksums\); checksums: 2 match, 1 mismatch, 1 without file$/m);
  });

  it("passes once every sidecar matches", async () => {
    const day = path.join(dir, "delivery");
    writeFileSync(path.join(day, "c.wav.sha1"), tool("sha1sum", ["c.wav"], day));
    rmSync(path.join(day, "d.wav.md5"));
    const r = await cli(["verify", "delivery", "--json"]);
    expect(r.exitCode, r.stdout).toBe(0);
    expect(JSON.parse(r.stdout)).toMatchObject({ against: null, unchanged: ["a.wav", "b.wav", "c.wav"], checksumsChecked: 3, checksumMismatches: [] });
  });
});
