/**
 * Issue #17's FLAC range: 8 to 32 bits, 1 to 8 channels, up to 384 kHz. Each file is made by Debian's sox (a
 * WAV) and encoded by Debian's flac; the FLAC must measure as its source WAV does: the same decoded samples
 * (SHA-256 of the floats, up to 24 bits), sample peak, RMS and integrated loudness within 0.01 dB/LU.
 * Multichannel loudness depends on which channel is which (ITU-R BS.1770-4, Annex 1, Table 3: surrounds 1.41,
 * LFE left out): the WAV says so in its WAVE_FORMAT_EXTENSIBLE mask, the FLAC in flac's
 * WAVEFORMATEXTENSIBLE_CHANNEL_MASK tag or, without one, by RFC 9639's fixed channel order (9.1.3).
 */
import { execFileSync, spawnSync } from "node:child_process";
import { readFileSync, writeFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { decodedSha } from "../helpers/decodedSha.ts";
import { deferToStreamInfo } from "../helpers/flacDeferHeaders.ts";
import { scanFolder } from "../helpers/scanFolder.ts";

const has = (cmd: string, arg = "--version"): boolean => spawnSync(cmd, [arg], { stdio: "ignore" }).status === 0;
const toolsPresent = has("sox") && has("flac") && has("metaflac");

const { file, scan } = scanFolder("flac-range");

/** sox: a tone per channel at its own frequency, so every channel differs. */
function makeWav(name: string, rate: number, bits: number, channels: number): void {
  const tones = Array.from({ length: channels }, (_, c) => ["sine", String(220 * (c + 1))]).flat();
  execFileSync("sox", ["-n", "-r", String(rate), "-b", String(bits), "-c", String(channels), file(name), "synth", "2", ...tones, "gain", "-3"]);
}

describe.runIf(toolsPresent)("FLAC across its range measures as the WAV it was encoded from (Debian's sox and flac)", () => {
  it.each([
    ["8-bit mono", 48000, 8, 1, []],
    ["16-bit mono 44.1 kHz", 44100, 16, 1, []],
    ["32-bit stereo", 48000, 32, 2, []],
    ["24-bit stereo at 384 kHz", 384000, 24, 2, ["--lax"]],
    ["24-bit quad (FL FR BL BR)", 48000, 24, 4, []],
    ["24-bit 5.1", 48000, 24, 6, []],
    ["24-bit 7.1", 48000, 24, 8, []],
  ] as const)("%s", async (label, rate, bits, channels, flags) => {
    const stem = label.replace(/[^a-z0-9]+/gi, "-");
    makeWav(`${stem}.wav`, rate, bits, channels);
    execFileSync("flac", ["-s", "-f", ...flags, file(`${stem}.wav`), "-o", file(`${stem}.flac`)]);
    const [flac, wav] = await Promise.all([scan(`${stem}.flac`), scan(`${stem}.wav`)]);
    expect(flac.error).toBeNull();
    expect(flac.format).toMatchObject({ container: "flac", bitDepth: bits, channels, sampleRateHz: rate });
    const m = flac.metrics!;
    const r = wav.metrics!;
    expect(Math.abs(m.samplePeakDbfs! - r.samplePeakDbfs!)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(m.rmsDbfs! - r.rmsDbfs!)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(m.integratedLufs! - r.integratedLufs!)).toBeLessThanOrEqual(0.01);
    expect(flac.format!.durationSeconds).toBeCloseTo(2, 9);
    const codes = flac.findings.map((f) => f.code);
    expect(codes).not.toContain("decode-error");
    expect(codes).not.toContain("flac-md5-mismatch");
    // libFLAC's codes come out as its own int32 at every depth: the decoded floats are bit for bit the WAV's, and
    // STREAMINFO's MD5 is checked (no info finding), 32 bits included.
    expect(await decodedSha(file(`${stem}.flac`))).toEqual(await decodedSha(file(`${stem}.wav`)));
    expect(codes).not.toContain("flac-md5-unset");
  }, 60_000);

  it("a FLAC without the mask tag (metaflac --remove-tag) takes RFC 9639's 7.1 order: the same loudness as the 7.1 WAV", async () => {
    makeWav("untagged.wav", 48000, 24, 8);
    execFileSync("flac", ["-s", "-f", file("untagged.wav"), "-o", file("untagged.flac")]);
    execFileSync("metaflac", ["--remove-tag=WAVEFORMATEXTENSIBLE_CHANNEL_MASK", file("untagged.flac")]);
    expect(execFileSync("metaflac", ["--export-tags-to=-", file("untagged.flac")], { encoding: "utf8" })).not.toMatch(/CHANNEL_MASK/);
    // sox writes the 7.1 WAV with mask 0x63F (FL FR FC LFE BL BR SL SR), the order RFC 9639 gives eight channels.
    const wavBytes = readFileSync(file("untagged.wav"));
    expect(wavBytes.readUInt32LE(40)).toBe(0x63f);
    const [flac, wav] = await Promise.all([scan("untagged.flac"), scan("untagged.wav")]);
    expect(Math.abs(flac.metrics!.integratedLufs! - wav.metrics!.integratedLufs!)).toBeLessThanOrEqual(0.01);
  });

  it("frames that leave rate and bit depth to STREAMINFO (codes 0) decode as the WAV: flac -t accepts the rewritten file", async () => {
    makeWav("defer.wav", 48000, 24, 2);
    execFileSync("flac", ["-s", "-f", file("defer.wav"), "-o", file("defer.flac")]);
    execFileSync("flac", ["-s", "-a", "-f", file("defer.flac"), "-o", file("defer.ana")]);
    const bytes = new Uint8Array(readFileSync(file("defer.flac")));
    const offsets = [...readFileSync(file("defer.ana"), "latin1").matchAll(/^frame=\d+\toffset=(\d+)/gm)].map((m) => Number(m[1]));
    // Every frame stated 48 kHz and 24 bits (RFC 9639, 9.1); now both are left to STREAMINFO.
    deferToStreamInfo(bytes, offsets, { depth: true });
    writeFileSync(file("deferred.flac"), bytes);
    // Debian's flac: still valid FLAC, and every frame header now defers to STREAMINFO.
    expect(spawnSync("flac", ["-s", "-t", file("deferred.flac")]).status).toBe(0);
    const [flac, wav] = await Promise.all([scan("deferred.flac"), scan("defer.wav")]);
    expect(flac.findings.map((f) => f.code)).not.toContain("decode-error");
    expect(flac.findings.map((f) => f.code)).not.toContain("flac-md5-mismatch");
    expect(Math.abs(flac.metrics!.integratedLufs! - wav.metrics!.integratedLufs!)).toBeLessThanOrEqual(0.01);
    expect(await decodedSha(file("deferred.flac"))).toEqual(await decodedSha(file("defer.wav")));
  });

  // 12-, 20- and other odd depths are decoded: tests/cli/flacOddDepths.test.ts. Below RFC 9639's 4 bits (8.2)
  // nothing is: a STREAMINFO saying 3 bits gives a stable error, not a measurement.
  it("a STREAMINFO claiming 3-bit samples is refused with bad-bit-depth", async () => {
    makeWav("three.wav", 48000, 16, 1);
    execFileSync("flac", ["-s", "-f", file("three.wav"), "-o", file("three.flac")]);
    const bytes = new Uint8Array(readFileSync(file("three.flac")));
    // STREAMINFO body from byte 8; bits per sample − 1 is bit 0 of its byte 12 and the top nibble of byte 13.
    bytes[20] &= 0xfe;
    bytes[21] = (bytes[21] & 0x0f) | (2 << 4);
    writeFileSync(file("three-bit.flac"), bytes);
    const report = await scan("three-bit.flac");
    expect(report.verdict).toBe("error");
    expect(report.metrics).toBeNull();
    expect(report.error?.code).toBe("bad-bit-depth");
    expect(report.error?.message).toMatch(/3 bits per sample; 4 to 32 supported/);
  });
});
