/**
 * FLAC, AIFF, AIFF-C, A-law/µ-law and 12/20-bit WAV through the same one-pass analysis: each reader must give
 * the samples (SHA-256 of the decoded floats) and the measurements (sample peak, RMS, integrated loudness) of the
 * same audio read from a WAV. Inputs are made by Debian's sox, ffmpeg and flac, which are the outside reference:
 * an equal result means our reader decodes the file the way those tools encoded it.
 */
import { createHash } from "node:crypto";
import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readAudioFile } from "../../cli/src/audio/readAudioFile.ts";
import { loadProfile } from "../../cli/src/profiles/loadProfile.ts";
import { analyseFile, type ScanContext } from "../../cli/src/scan/analyseFile.ts";
import type { FileReport } from "../../shared/src/types/report.ts";
import { fileReportSchema } from "../../shared/src/types/report.ts";
import { sine, whiteNoise, mix } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { decodedSha } from "../helpers/decodedSha.ts";

const has = (cmd: string, arg = "--version"): boolean => spawnSync(cmd, [arg], { stdio: "ignore" }).status === 0;
const toolsPresent = has("sox") && has("ffmpeg", "-version") && has("flac");

let dir: string;
let context: ScanContext;
const file = (name: string): string => path.join(dir, name);
const run = (cmd: string, args: string[]): void => {
  execFileSync(cmd, args, { stdio: "ignore" });
};

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "tidemark-formats-"));
  const loaded = await loadProfile("preservation-master", dir);
  context = { profile: loaded.profile, settings: loaded.settings, spectrograms: null, fingerprint: false, closeups: false };
  if (!toolsPresent) return;
  // 6 s of 48 kHz 24-bit stereo: a tone and noise on each side, made by our synthesiser, written by our WAV writer.
  const rate = 48000;
  const left = mix(sine({ frequencyHz: 997, sampleRateHz: rate, seconds: 6, peakDbfs: -6 }), whiteNoise({ sampleRateHz: rate, seconds: 6, rmsDbfs: -30, seed: 7 }));
  const right = mix(sine({ frequencyHz: 440, sampleRateHz: rate, seconds: 6, peakDbfs: -12 }), whiteNoise({ sampleRateHz: rate, seconds: 6, rmsDbfs: -36, seed: 8 }));
  writeFileSync(file("ref.wav"), encodeWav([left, right], { sampleRateHz: rate, bitDepth: 24 }));
  run("flac", ["-s", "-f", "-8", file("ref.wav"), "-o", file("ref.flac")]);
  run("sox", [file("ref.wav"), file("ref.aiff")]);
  const ff = (codec: string, out: string, format?: string): void =>
    run("ffmpeg", ["-loglevel", "error", "-y", "-i", file("ref.wav"), "-c:a", codec, ...(format ? ["-f", format] : []), file(out)]);
  ff("pcm_s24be", "ffmpeg24.aiff", "aiff");
  ff("pcm_f32be", "fl32.aifc", "aiff");
  ff("pcm_f64be", "fl64.aifc", "aiff");
  ff("pcm_s16le", "sowt.aifc", "aiff");
  ff("pcm_s16le", "ref16.wav");
  ff("pcm_s16be", "ref16.aiff", "aiff");
  ff("pcm_alaw", "alaw.aifc", "aiff");
  ff("pcm_alaw", "alaw.wav");
  ff("pcm_mulaw", "ulaw.aifc", "aiff");
  ff("pcm_mulaw", "ulaw.wav");
}, 60_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function scan(name: string): Promise<FileReport> {
  const { report } = await analyseFile({ absPath: file(name), relPath: name, sizeBytes: 0 }, context);
  expect(fileReportSchema.safeParse(JSON.parse(JSON.stringify(report))).success).toBe(true);
  return report;
}

function expectSameLevels(a: FileReport, b: FileReport): void {
  expect(a.error).toBeNull();
  const m = a.metrics!;
  const r = b.metrics!;
  expect(Math.abs(m.samplePeakDbfs! - r.samplePeakDbfs!)).toBeLessThanOrEqual(0.01);
  expect(Math.abs(m.rmsDbfs! - r.rmsDbfs!)).toBeLessThanOrEqual(0.01);
  expect(Math.abs(m.integratedLufs! - r.integratedLufs!)).toBeLessThanOrEqual(0.01);
  expect(a.format?.durationSeconds).toBeCloseTo(b.format!.durationSeconds, 9);
}

describe.runIf(toolsPresent)("each reader decodes what Debian's tools encoded (same samples and levels as the WAV)", () => {
  it.each([
    ["ref.flac", "ref.wav", "flac", 24], // flac 1.x (Debian) encoder
    ["ref.aiff", "ref.wav", "aiff", 24], // sox AIFF writer
    ["ffmpeg24.aiff", "ref.wav", "aiff", 24], // ffmpeg pcm_s24be
    ["fl32.aifc", "ref.wav", "aifc", 32], // ffmpeg pcm_f32be: 24-bit codes are exact in float32
    ["fl64.aifc", "ref.wav", "aifc", 64], // ffmpeg pcm_f64be
    ["sowt.aifc", "ref16.wav", "aifc", 16], // ffmpeg pcm_s16le in AIFF-C ("sowt") against ffmpeg's 16-bit WAV
    ["ref16.aiff", "ref16.wav", "aiff", 16], // ffmpeg pcm_s16be
    ["alaw.aifc", "alaw.wav", "aifc", 8], // ffmpeg pcm_alaw in both containers
    ["ulaw.aifc", "ulaw.wav", "aifc", 8], // ffmpeg pcm_mulaw in both containers
  ])("%s equals %s", async (name, reference, container, bitDepth) => {
    const [report, ref] = await Promise.all([scan(name), scan(reference)]);
    expect(report.format).toMatchObject({ container, bitDepth, channels: 2, sampleRateHz: 48000 });
    expectSameLevels(report, ref);
    expect(await decodedSha(file(name))).toEqual(await decodedSha(file(reference)));
    // The FLAC's STREAMINFO MD5 (written by flac) matched the decoded audio: no md5 finding.
    expect(report.findings.map((f) => f.code)).not.toContain("flac-md5-mismatch");
    expect(report.findings.map((f) => f.code)).not.toContain("decode-error");
  });

  it("names the encoding of A-law and µ-law files and leaves effectiveBitDepth out (no linear code to count)", async () => {
    const al = await scan("alaw.wav");
    const ul = await scan("ulaw.aifc");
    expect(al.format).toMatchObject({ container: "wav", encoding: "alaw", bitDepth: 8 });
    expect(ul.format).toMatchObject({ container: "aifc", encoding: "mulaw", bitDepth: 8 });
    expect(al.metrics?.effectiveBitDepth).toBeNull();
  });

  it("a FLAC with one flipped byte: a decode-error at the damaged frame's time, the MD5 disagrees, measuring goes on", async () => {
    const bytes = readFileSync(file("ref.flac"));
    const at = Math.floor(bytes.length * 0.5);
    bytes[at] ^= 0xff;
    writeFileSync(file("flipped.flac"), bytes);
    const report = await scan("flipped.flac");
    expect(report.error).toBeNull();
    expect(report.format?.durationSeconds).toBeCloseTo(6, 6);
    const errors = report.findings.filter((f) => f.code === "decode-error");
    expect(errors.length).toBeGreaterThanOrEqual(1);
    // The byte sits about half-way into the audio; a frame is 4096 samples (85 ms at 48 kHz) with flac -8.
    expect(errors[0].startSeconds!).toBeGreaterThan(1.5);
    expect(errors[0].startSeconds!).toBeLessThan(4.5);
    expect(errors[0].message).toMatch(/CRC|sync/);
    expect(report.findings.some((f) => f.code === "flac-md5-mismatch" && f.severity === "fail")).toBe(true);
    expect(report.verdict).toBe("fail");
    // flac itself (Debian's reference decoder) also rejects the file.
    expect(spawnSync("flac", ["-s", "-t", file("flipped.flac")]).status).not.toBe(0);
  });

  it("a FLAC cut short: truncated with the present and announced lengths; what is there is measured", async () => {
    const bytes = readFileSync(file("ref.flac"));
    writeFileSync(file("cut.flac"), bytes.subarray(0, Math.floor(bytes.length * 0.6)));
    const report = await scan("cut.flac");
    expect(report.error).toBeNull();
    const cut = report.findings.find((f) => f.code === "truncated");
    expect(cut?.severity).toBe("fail");
    expect(cut!.startSeconds!).toBeGreaterThan(3);
    expect(cut!.endSeconds!).toBeCloseTo(6, 6);
    expect(report.metrics?.integratedLufs).not.toBeNull();
  });

  it("an unset STREAMINFO MD5 is an info finding (flac --no-md5-sum)", async () => {
    run("flac", ["-s", "-f", "--no-md5-sum", file("ref.wav"), "-o", file("nomd5.flac")]);
    const report = await scan("nomd5.flac");
    expect(report.findings.find((f) => f.code === "flac-md5-unset")?.severity).toBe("info");
    expect(report.verdict).not.toBe("fail");
  });

  it("Vorbis comments and AIFF text chunks become metadata.text", async () => {
    run("flac", ["-s", "-f", "-T", "TITLE=Harbourside reel 4", file("ref.wav"), "-o", file("tagged.flac")]);
    const flac = await scan("tagged.flac");
    expect(flac.metadata.text).toContainEqual({ key: "TITLE", value: "Harbourside reel 4" });
    // ffmpeg's AIFF muxer writes title → NAME, author → AUTH, copyright → "(c) ", comment → ANNO.
    run("ffmpeg", [
      "-loglevel", "error", "-y", "-i", file("ref.wav"),
      "-metadata", "title=Reel 4", "-metadata", "author=Harbourside Sound Archive", "-metadata", "copyright=2026 Harbourside", "-metadata", "comment=second transfer",
      "-c:a", "pcm_s24be", "-f", "aiff", file("text.aiff"),
    ]);
    const aiff = await scan("text.aiff");
    expect(aiff.metadata.text).toEqual(
      expect.arrayContaining([
        { key: "NAME", value: "Reel 4" },
        { key: "AUTH", value: "Harbourside Sound Archive" },
        { key: "(c)", value: "2026 Harbourside" },
        { key: "ANNO", value: "second transfer" },
      ]),
    );
  });
});

describe.runIf(toolsPresent)("G.711 A-law and µ-law in WAV decode like sox decodes them (ITU-T G.711 tables)", () => {
  it.each([
    ["a-law", "sox-alaw.wav"],
    ["u-law", "sox-ulaw.wav"],
  ])("%s: every sample equals sox's 16-bit expansion", async (encoding, name) => {
    run("sox", [file("ref.wav"), "-e", encoding, file(name)]);
    run("sox", [file(name), "-e", "signed-integer", "-b", "16", "-t", "raw", file(`${name}.raw`)]);
    const raw = readFileSync(file(`${name}.raw`));
    const expected = new Int16Array(raw.buffer, raw.byteOffset, raw.length / 2);
    const got: number[] = [];
    await readAudioFile(file(name), {
      onOpen: (info) => {
        expect(info.format.encoding).toBe(encoding === "a-law" ? "alaw" : "mulaw");
        return (block) => {
          for (let i = 0; i < block.frames; i++) got.push(block.channels[0][i] * 32768, block.channels[1][i] * 32768);
        };
      },
    });
    expect(got.length).toBe(expected.length);
    let mismatches = 0;
    for (let i = 0; i < got.length; i++) if (got[i] !== expected[i]) mismatches++;
    expect(mismatches).toBe(0);
  });
});

/** A WAV whose samples carry `bits` significant bits, in a 16/24-bit container, described as the caller says. */
function lowBitsWav(bits: 12 | 20, header: "fmt-depth" | "extensible" | "container"): Uint8Array {
  const container = bits === 12 ? 16 : 24;
  const rate = 48000;
  const step = 2 ** (bits - 1);
  const q = (x: Float32Array): Float32Array => x.map((v) => Math.round(v * step) / step);
  const left = q(mix(sine({ frequencyHz: 1000, sampleRateHz: rate, seconds: 2, peakDbfs: -3 }), whiteNoise({ sampleRateHz: rate, seconds: 2, rmsDbfs: -40, seed: 3 })));
  const bytes = encodeWav([left, left], { sampleRateHz: rate, bitDepth: container, extensible: header === "extensible" });
  const v = new DataView(bytes.buffer);
  // fmt starts at byte 12: its body at 20; wBitsPerSample at body + 14, wValidBitsPerSample at body + 18.
  if (header === "fmt-depth") v.setUint16(20 + 14, bits, true);
  if (header === "extensible") v.setUint16(20 + 18, bits, true);
  return bytes;
}

describe("12- and 20-bit PCM in 16/24-bit containers", () => {
  it.each([
    [20, "fmt-depth"],
    [20, "extensible"],
    [12, "fmt-depth"],
    [12, "extensible"],
  ] as const)("%i bits named by %s: measured, effectiveBitDepth on the valid bits, no padded-bit-depth finding", async (bits, header) => {
    writeFileSync(file(`low${bits}-${header}.wav`), lowBitsWav(bits, header));
    writeFileSync(file(`low${bits}-container.wav`), lowBitsWav(bits, "container"));
    const report = await scan(`low${bits}-${header}.wav`);
    const asContainer = await scan(`low${bits}-container.wav`);
    expect(report.format?.bitDepth).toBe(bits);
    expect(report.metrics?.effectiveBitDepth).toBe(bits);
    expect(report.findings.map((f) => f.code)).not.toContain("padded-bit-depth");
    // The same bytes declared as full-depth audio are padded (the check this header keeps quiet).
    expect(asContainer.findings.map((f) => f.code)).toContain("padded-bit-depth");
    expectSameLevels(report, asContainer);
  });
});

describe("damage and checksums in WAV", () => {
  const tone = sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: 1, peakDbfs: -6 });

  it("a BWF MD5 chunk that matches the data passes; one byte changed in the audio fails audio-md5-mismatch", async () => {
    const data = encodeWav([tone], { sampleRateHz: 48000, bitDepth: 24 });
    const dataAt = data.length - tone.length * 3;
    // The digest comes from node:crypto (RFC 1321 MD5), not from the reader.
    const md5 = createHash("md5").update(data.subarray(dataAt)).digest();
    const withMd5 = encodeWav([tone], { sampleRateHz: 48000, bitDepth: 24, extraChunks: [{ id: "MD5 ", body: new Uint8Array(md5) }] });
    writeFileSync(file("md5-ok.wav"), withMd5);
    const changed = Uint8Array.from(withMd5);
    changed[changed.length - 3000] ^= 0x01;
    writeFileSync(file("md5-bad.wav"), changed);
    expect((await scan("md5-ok.wav")).findings.map((f) => f.code)).not.toContain("audio-md5-mismatch");
    const bad = await scan("md5-bad.wav");
    expect(bad.findings.find((f) => f.code === "audio-md5-mismatch")?.severity).toBe("fail");
    expect(bad.verdict).toBe("fail");
  });

  it("zero samples: no-audio, fail, never pass", async () => {
    writeFileSync(file("empty-data.wav"), encodeWav([new Float32Array(0)], { sampleRateHz: 48000, bitDepth: 24 }));
    const report = await scan("empty-data.wav");
    expect(report.findings.find((f) => f.code === "no-audio")?.severity).toBe("fail");
    expect(report.verdict).toBe("fail");
  });

  it("bytes after the last chunk: trailing-data with the byte count", async () => {
    const wav = encodeWav([tone], { sampleRateHz: 48000, bitDepth: 24 });
    const padded = new Uint8Array(wav.length + 5000);
    padded.set(wav);
    writeFileSync(file("trailing.wav"), padded);
    const report = await scan("trailing.wav");
    const trailing = report.findings.find((f) => f.code === "trailing-data");
    expect(trailing?.severity).toBe("warn");
    expect(trailing?.message).toMatch(/^5000 byte/);
    expect(report.format?.durationSeconds).toBeCloseTo(1, 9);
  });

  it("still-unsupported encodings name their format tag (IMA ADPCM, 0x0011)", async () => {
    const wav = encodeWav([tone], { sampleRateHz: 48000, bitDepth: 16 });
    new DataView(wav.buffer).setUint16(20, 0x0011, true);
    writeFileSync(file("adpcm.wav"), wav);
    const report = await scan("adpcm.wav");
    expect(report.error?.code).toBe("unsupported-encoding");
    expect(report.error?.message).toMatch(/0x0011 \(IMA ADPCM\)/);
  });
});
