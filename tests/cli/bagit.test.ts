/**
 * BagIt (RFC 8493) with the real binary: `scan --bag` writes a bag that Debian's coreutils check line by
 * line (`sha256sum -c` reads manifest lines as they are), and `verify BAGDIR` checks bags built with
 * coreutils (md5sum/sha256sum) by this test, finding changed, missing and extra payload files, a wrong
 * Payload-Oxum and a changed tag file. No well-kept BagIt library is in the registries here.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { createHash } from "node:crypto";
import { appendFileSync, cpSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, unlinkSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { decodeBagPath, encodeBagPath, parseManifest, parseTagFile } from "../../shared/src/fixity/bagit.ts";
import { sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { isolatedEnv, runCli } from "./runCli.ts";

let dir: string;
const env = isolatedEnv({ TIDEMARK_NO_CONFIG: "1" });
const cli = (args: string[]) => runCli(args, { cwd: dir, env });
const wav = (hz: number) => encodeWav([sine({ frequencyHz: hz, sampleRateHz: 48000, seconds: 0.5, peakDbfs: -12 })], { sampleRateHz: 48000, bitDepth: 24 });

/** Every regular file under a folder, relative, forward slashes. */
function walk(root: string, sub = ""): string[] {
  return readdirSync(path.join(root, sub), { withFileTypes: true }).flatMap((e) => {
    const rel = sub ? `${sub}/${e.name}` : e.name;
    return e.isDirectory() ? walk(root, rel) : [rel];
  });
}

/** A bag made the way an archive might by hand: coreutils checksums, a bag-info.txt with Payload-Oxum. */
function coreutilsBag(name: string): string {
  const bag = path.join(dir, name);
  mkdirSync(path.join(bag, "data", "reel 2"), { recursive: true });
  writeFileSync(path.join(bag, "data", "reel-1.wav"), wav(220));
  writeFileSync(path.join(bag, "data", "reel 2", "take-1.wav"), wav(330));
  const payload = walk(bag).filter((f) => f.startsWith("data/")).sort();
  const bytes = payload.reduce((n, f) => n + statSync(path.join(bag, f)).size, 0);
  writeFileSync(path.join(bag, "bagit.txt"), "BagIt-Version: 1.0\nTag-File-Character-Encoding: UTF-8\n");
  writeFileSync(path.join(bag, "bag-info.txt"), `Source-Organization: Harbourside Sound Archive\nPayload-Oxum: ${bytes}.${payload.length}\n`);
  for (const tool of ["md5sum", "sha256sum"]) {
    const out = execFileSync(tool, payload, { cwd: bag, encoding: "utf8" });
    writeFileSync(path.join(bag, `manifest-${tool.replace("sum", "")}.txt`), out);
  }
  const tags = ["bagit.txt", "bag-info.txt", "manifest-md5.txt", "manifest-sha256.txt"];
  writeFileSync(path.join(bag, "tagmanifest-sha256.txt"), execFileSync("sha256sum", tags, { cwd: bag, encoding: "utf8" }));
  return bag;
}

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-bagit-"));
  mkdirSync(path.join(dir, "day-1", "reel-2"), { recursive: true });
  writeFileSync(path.join(dir, "day-1", "reel-1.wav"), wav(220));
  writeFileSync(path.join(dir, "day-1", "reel-2", "take-1.wav"), wav(330));
  writeFileSync(path.join(dir, "day-1", "reel-2", "notes.wav"), "not audio");
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("BagIt text (RFC 8493 §2.1.3, §2.2.2)", () => {
  it("percent-encodes CR, LF and % in manifest paths and reads them back", () => {
    const odd = "data/100% take\r\n2.wav";
    expect(encodeBagPath(odd)).toBe("data/100%25 take%0D%0A2.wav");
    expect(decodeBagPath(encodeBagPath(odd))).toBe(odd);
    expect(parseManifest(`${"a".repeat(64)}  ${encodeBagPath(odd)}\n`, "manifest-sha256.txt", "sha256")).toEqual([{ digest: "a".repeat(64), path: odd }]);
    expect(() => parseManifest("abc  data/x.wav\n", "manifest-sha256.txt", "sha256")).toThrow(/64 hex digits, got 3/);
  });

  it("reads continued tag lines as one value", () => {
    expect(parseTagFile("External-Description: two\n  lines\nBagging-Date: 2026-12-05\n", "bag-info.txt")).toEqual([
      ["External-Description", "two lines"],
      ["Bagging-Date", "2026-12-05"],
    ]);
  });
});

describe("tidemark scan --bag", () => {
  it("writes a bag that coreutils checks and whose Payload-Oxum and tag files follow the RFC", async () => {
    const r = await cli(["scan", "day-1", "--bag", "bag-out", "--format", "json", "-q", "-p", "access-copy"]);
    // notes.wav cannot be read: exit 3, and it is said not to be in the bag.
    expect(r.exitCode).toBe(3);
    expect(r.stderr).toContain("reel-2/notes.wav is not in the bag");
    const bag = path.join(dir, "bag-out");
    expect(readFileSync(path.join(bag, "bagit.txt"), "utf8")).toBe("BagIt-Version: 1.0\nTag-File-Character-Encoding: UTF-8\n");
    // Source: coreutils sha256sum -c, reading manifest lines as written (RFC 8493 §2.1.3: "checksum filepath").
    for (const manifest of ["manifest-sha256.txt", "tagmanifest-sha256.txt"]) {
      const check = spawnSync("sha256sum", ["--strict", "-c", manifest], { cwd: bag, encoding: "utf8" });
      expect(check.status, check.stdout + check.stderr).toBe(0);
    }
    const payload = walk(bag).filter((f) => f.startsWith("data/")).sort();
    expect(payload).toEqual(["data/reel-1.wav", "data/reel-2/take-1.wav"]);
    const listed = readFileSync(path.join(bag, "manifest-sha256.txt"), "utf8").trim().split("\n").map((l) => l.split(/\s+/)[1]).sort();
    expect(listed).toEqual(payload);
    const bytes = payload.reduce((n, f) => n + statSync(path.join(bag, f)).size, 0);
    expect(readFileSync(path.join(bag, "bag-info.txt"), "utf8")).toContain(`Payload-Oxum: ${bytes}.2\n`);
    const tagListed = readFileSync(path.join(bag, "tagmanifest-sha256.txt"), "utf8");
    expect(tagListed).toContain("tidemark-report.json");
    const report = JSON.parse(readFileSync(path.join(bag, "tidemark-report.json"), "utf8")) as { files: { path: string }[] };
    expect(report.files.map((f) => f.path)).toContain("reel-2/notes.wav");

    const v = await cli(["verify", "bag-out"]);
    expect(v.exitCode, v.stdout).toBe(0);
    expect(v.stdout).toMatch(/bag bag-out: valid \(RFC 8493\): 2 payload files, \d+ bytes, sha256; 0 changed, 0 missing, 0 extra, 0 unreadable/);
  });

  it("refuses a --bag folder that is not empty before scanning", async () => {
    const r = await cli(["scan", "day-1", "--bag", "bag-out", "-q"]);
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/--bag .*bag-out is not empty/);
  });
});

describe("scan --bag with file names that are not UTF-8 (RFC 8493 §2.1.3: manifests are UTF-8; only CR, LF and % are percent-encoded)", () => {
  const raw = (...parts: (string | number[])[]): Buffer =>
    Buffer.concat(parts.map((p) => (typeof p === "string" ? Buffer.from(p, "utf8") : Buffer.from(p))));
  // Latin-1 "café.wav" and "cafè.wav" (both show as "caf\uFFFD.wav"), and one with a "%" beside a Latin-1 byte.
  const originals = [raw("caf", [0xe9], ".wav"), raw("caf", [0xe8], ".wav"), raw("50%-R", [0xe9], "el.wav")];

  it("copies each under a UTF-8 name that keeps its bytes (%XX), lists it per §2.1.3, and verifies", async () => {
    mkdirSync(path.join(dir, "latin-1"));
    originals.forEach((name, i) => writeFileSync(raw(dir, "/latin-1/", [...name]), wav(440 + 110 * i)));
    const r = await cli(["scan", "latin-1", "--bag", "bag-latin-1", "--format", "json", "-q", "-p", "access-copy"]);
    expect(r.exitCode, r.stderr).toBe(0);
    expect(r.stderr).not.toContain("not in the bag");
    const bag = path.join(dir, "bag-latin-1");
    const payload = walk(bag).filter((f) => f.startsWith("data/")).sort();
    expect(payload).toEqual(["data/50%25-R%E9el.wav", "data/caf%E8.wav", "data/caf%E9.wav"]);

    // The manifest read as §2.1.3 says, by this test's own decoder: "%25" stands for "%" (and %0D, %0A for CR, LF).
    const manifest = readFileSync(path.join(bag, "manifest-sha256.txt"), "utf8");
    expect(manifest).toContain("  data/caf%25E9.wav\n");
    expect(manifest).toContain("  data/50%2525-R%25E9el.wav\n");
    const entries = manifest.trim().split("\n").map((line) => {
      const [digest, listed] = line.split(/ {2}/);
      return { digest, file: listed.replace(/%0D/gi, "\r").replace(/%0A/gi, "\n").replace(/%25/g, "%") };
    });
    expect(entries.map((e) => e.file).sort()).toEqual(payload);
    // Each listed digest is the SHA-256 (OpenSSL) of the bag's copy and of the original, read through its Buffer path.
    const names = new Map(
      readFileSync(path.join(bag, "tidemark-names.txt"), "utf8").trim().split("\n").map((l) => {
        const [bytes, listed] = l.split(" ");
        return [listed.replace(/%25/g, "%"), Buffer.from(bytes, "base64")] as const;
      }),
    );
    for (const e of entries) {
      const original = names.get(e.file);
      expect(original, e.file).toBeDefined();
      // The bag name gives the bytes back: %XX is the byte XX (RFC 3986 §2.1).
      expect(Buffer.from(e.file.slice("data/".length).replace(/%([0-9A-F]{2})/g, (_, h: string) => String.fromCharCode(parseInt(h, 16))), "latin1")).toEqual(original);
      const sha = (b: Buffer) => createHash("sha256").update(b).digest("hex");
      expect(sha(readFileSync(path.join(bag, e.file)))).toBe(e.digest);
      expect(sha(readFileSync(raw(dir, "/latin-1/", [...original!])))).toBe(e.digest);
    }
    expect(readFileSync(path.join(bag, "tagmanifest-sha256.txt"), "utf8")).toContain("  tidemark-names.txt\n");

    const v = await cli(["verify", "bag-latin-1", "--json"]);
    expect(v.exitCode, v.stdout).toBe(0);
    expect(JSON.parse(v.stdout)).toMatchObject({ valid: true, payloadFiles: 3, problems: [] });
  });
});

describe("tidemark verify BAGDIR", () => {
  it("finds a bag built with coreutils valid", async () => {
    coreutilsBag("bag-a");
    const r = await cli(["verify", "bag-a", "--json"]);
    expect(r.exitCode, r.stdout).toBe(0);
    expect(JSON.parse(r.stdout)).toMatchObject({ valid: true, payloadFiles: 2, algorithms: ["md5", "sha256"], problems: [] });
  });

  it("finds a changed, a missing and an extra payload file, and a Payload-Oxum that no longer fits", async () => {
    const bag = coreutilsBag("bag-b");
    const victim = path.join(bag, "data", "reel-1.wav");
    const bytes = readFileSync(victim);
    bytes[bytes.length - 10] ^= 0x01;
    writeFileSync(victim, bytes);
    unlinkSync(path.join(bag, "data", "reel 2", "take-1.wav"));
    // Shorter than the file it replaces, so the byte count no longer fits Payload-Oxum.
    writeFileSync(path.join(bag, "data", "stray.wav"), encodeWav([sine({ frequencyHz: 440, sampleRateHz: 48000, seconds: 0.25, peakDbfs: -12 })], { sampleRateHz: 48000, bitDepth: 24 }));
    const r = await cli(["verify", "bag-b", "--json"]);
    expect(r.exitCode).toBe(1);
    const v = JSON.parse(r.stdout) as { valid: boolean; problems: { kind: string; path: string }[] };
    expect(v.valid).toBe(false);
    const kinds = v.problems.map((p) => `${p.kind} ${p.path}`);
    // Both manifests see each problem: a payload file must be in every payload manifest (RFC 8493 §3).
    expect(kinds).toEqual(
      expect.arrayContaining(["changed data/reel-1.wav", "missing data/reel 2/take-1.wav", "extra data/stray.wav", "oxum bag-info.txt"]),
    );
    expect(kinds.filter((k) => k === "changed data/reel-1.wav")).toHaveLength(2);
    const text = await cli(["verify", "bag-b"]);
    expect(text.stdout).toMatch(/^changed {5}data\/reel-1\.wav {2}\(md5 is [0-9a-f]{32}, manifest-md5\.txt says [0-9a-f]{32}\)$/m);
    expect(text.stdout).toMatch(/bag bag-b: NOT valid/);
  });

  it("finds a tag file changed after its tag manifest was written", async () => {
    const bag = coreutilsBag("bag-c");
    appendFileSync(path.join(bag, "bag-info.txt"), "Contact-Name: someone who edited it later\n");
    const r = await cli(["verify", "bag-c", "--json"]);
    expect(r.exitCode).toBe(1);
    expect((JSON.parse(r.stdout) as { problems: { kind: string; path: string }[] }).problems).toEqual([
      expect.objectContaining({ kind: "changed", path: "bag-info.txt" }),
    ]);
  });

  it("names a malformed manifest, and asks for --against when the folder is not a bag", async () => {
    const bag = coreutilsBag("bag-d");
    writeFileSync(path.join(bag, "manifest-sha256.txt"), "not a manifest line\n");
    const bad = await cli(["verify", "bag-d"]);
    expect(bad.exitCode).toBe(2);
    expect(bad.stderr).toMatch(/manifest-sha256\.txt: line 1 is not "checksum path"/);
    cpSync(path.join(dir, "day-1"), path.join(dir, "plain"), { recursive: true });
    const plain = await cli(["verify", "plain"]);
    expect(plain.exitCode).toBe(2);
    expect(plain.stderr).toMatch(/expected --against REPORT\.json .* or one BagIt bag folder/);
  });
});
