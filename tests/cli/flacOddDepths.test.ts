/**
 * FLAC at depths whose frames reach libFLAC rewritten (4–7, 9–15, 17–23, 25–31 bits): each frame is
 * rewritten at the next of 8/16/24/32 bits (shared/src/flac/flacDepthWidening.ts) and shifted back. The files are
 * made by Debian's flac from WAVs whose WAVE_FORMAT_EXTENSIBLE wValidBitsPerSample says the depth; they must
 * measure as that WAV (sample peak, RMS, integrated loudness within 0.01 dB/LU), decode to the same samples as
 * Debian's `flac -d` does, and pass the STREAMINFO MD5 (RFC 9639, 8.2: MD5 of the samples at the stream's depth).
 */
import { execFileSync, spawnSync } from "node:child_process";
import { readFileSync, writeFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import type { FileReport } from "../../shared/src/types/report.ts";
import { pinkNoise, seededRandom } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { BLOCK, constant, fixed, frame, lpc, SIZE_CODE, verbatim, zeroEscape, type Sub } from "../helpers/flacFrameBuilder.ts";
import { decodedSha } from "../helpers/decodedSha.ts";
import { deferToStreamInfo } from "../helpers/flacDeferHeaders.ts";
import { scanFolder } from "../helpers/scanFolder.ts";

const has = (cmd: string, arg = "--version"): boolean => spawnSync(cmd, [arg], { stdio: "ignore" }).status === 0;
const toolsPresent = has("flac") && has("metaflac");

const { file, scan } = scanFolder("flac-odd");

const RATE = 48000;
const SEG = 8192;

/**
 * Integer codes at `bits`, in segments meant to make flac -8 pick each stereo decorrelation (RFC 9639, 9.1.3):
 * a loud and a quiet channel (independent), R = L + noise (left/side), L = R + noise (right/side), L/R = A ± 2B
 * (mid/side); then tones (FIXED/LPC), silence beside full-scale noise (CONSTANT, VERBATIM). Extra channels are
 * the first two with a delay and gain of their own, so every channel differs.
 */
function codes(bits: number, channels: number, seed: number): Int32Array[] {
  const full = 2 ** (bits - 1);
  const a = Math.max(1, Math.floor(full / 4));
  const rnd = seededRandom(seed);
  const noise = (amp: number): number => Math.round((rnd() * 2 - 1) * amp);
  const clip = (v: number): number => Math.max(-full, Math.min(full - 1, v));
  const n = 6 * SEG;
  const l = new Int32Array(n);
  const r = new Int32Array(n);
  for (let i = 0; i < SEG; i++) {
    l[i] = noise(a);
    r[i] = noise(a / 16);
    const A = noise(a);
    l[SEG + i] = A;
    r[SEG + i] = clip(A + noise(a));
    const C = noise(a);
    r[2 * SEG + i] = C;
    l[2 * SEG + i] = clip(C + noise(a));
    const M = noise(a / 2);
    const S = noise(a / 2);
    l[3 * SEG + i] = clip(M + 2 * S);
    // L + R odd half the time: mid/side keeps that bit in the side channel's lowest bit (RFC 9639, 4.2).
    r[3 * SEG + i] = clip(M - 2 * S + (rnd() < 0.5 ? 1 : 0));
    // Multiples of 4: flac codes them with 2 wasted bits (RFC 9639, 9.2.2), which the rewrite grows.
    l[4 * SEG + i] = 4 * Math.round((Math.sin(i * 0.05) * full * 0.7) / 4);
    r[4 * SEG + i] = Math.round(Math.sin(i * 0.031 + 0.3 * Math.sin(i * 0.001)) * full * 0.6);
    l[5 * SEG + i] = 0;
    r[5 * SEG + i] = noise(full - 1);
  }
  // Mono: the right channel, silent in its first segment (CONSTANT) and full-scale noise in its last (VERBATIM).
  if (channels === 1) r.fill(0, 0, SEG);
  const out = channels === 1 ? [r] : [l, r];
  for (let c = 2; c < channels; c++) {
    const src = out[c % 2];
    const x = new Int32Array(n);
    for (let i = 0; i < n; i++) x[i] = Math.round(src[(i + 97 * c) % n] * (0.9 - 0.1 * c));
    out.push(x);
  }
  return out;
}

/** The WAV: extensible, 8/16/24/32-bit words, wValidBitsPerSample = bits (flac keeps that as the stream's depth). */
function makeWav(name: string, bits: number, channels: number, seed = bits): void {
  const container = (Math.ceil(bits / 8) * 8) as 8 | 16 | 24 | 32;
  const full = 2 ** (bits - 1);
  const planar = codes(bits, channels, seed).map((x) => Float32Array.from(x, (v) => v / full));
  const masks: Record<number, number> = { 1: 0x4, 2: 0x3, 6: 0x3f, 8: 0x63f };
  const wav = encodeWav(planar, { sampleRateHz: RATE, bitDepth: container, extensible: true, channelMask: masks[channels] } as Parameters<typeof encodeWav>[1]);
  new DataView(wav.buffer).setUint16(20 + 18, bits, true);
  writeFileSync(file(name), wav);
}

function encode(wav: string, flac: string, flags: string[]): void {
  execFileSync("flac", ["-s", "-f", ...flags, file(wav), "-o", file(flac)]);
}

/** Debian's flac's own analysis (flac -a): per frame its offset, channel assignment and subframe types. */
function analyse(flac: string): { offsets: number[]; assignments: Set<string>; types: Set<string>; wasted: Set<string> } {
  execFileSync("flac", ["-s", "-a", "-f", file(flac), "-o", file(`${flac}.ana`)]);
  const text = readFileSync(file(`${flac}.ana`), "latin1");
  return {
    offsets: [...text.matchAll(/^frame=\d+\toffset=(\d+)/gm)].map((m) => Number(m[1])),
    assignments: new Set([...text.matchAll(/channel_assignment=(\w+)/g)].map((m) => m[1])),
    types: new Set([...text.matchAll(/\ttype=(\w+)/g)].map((m) => m[1])),
    wasted: new Set([...text.matchAll(/wasted_bits=(\d+)/g)].map((m) => m[1])),
  };
}

function expectSameMeasurements(flac: FileReport, wav: FileReport): void {
  const m = flac.metrics!;
  const r = wav.metrics!;
  expect(Math.abs(m.samplePeakDbfs! - r.samplePeakDbfs!)).toBeLessThanOrEqual(0.01);
  expect(Math.abs(m.rmsDbfs! - r.rmsDbfs!)).toBeLessThanOrEqual(0.01);
  expect(Math.abs(m.integratedLufs! - r.integratedLufs!)).toBeLessThanOrEqual(0.01);
}

/** "fLaC" + STREAMINFO (RFC 9639, 8.2): block sizes 16, frame sizes unknown, 48 kHz, channels, depth, total; MD5 unset. */
function streamHeader(bps: number, channels: number, frames: number): Uint8Array {
  const info = new Uint8Array(42);
  info.set([0x66, 0x4c, 0x61, 0x43, 0x80, 0, 0, 34]);
  info.set([0, BLOCK, 0, BLOCK, 0, 0, 0, 0, 0, 0, 0x0b, 0xb8, ((channels - 1) << 1) | ((bps - 1) >> 4), ((bps - 1) & 15) << 4, 0, 0, 0, BLOCK * frames], 8);
  return info;
}

describe.runIf(toolsPresent)("FLAC at odd depths decodes as the WAV it came from (Debian's flac)", () => {
  // 4, 7 and 28 bits are outside the FLAC subset: flac makes them with --lax only.
  it.each([
    ["12-bit stereo -8", 12, 2, ["-8"]],
    ["20-bit stereo -8", 20, 2, ["-8"]],
    ["20-bit stereo --no-mid-side", 20, 2, ["-8", "--no-mid-side"]],
    ["20-bit mono", 20, 1, ["-5"]],
    ["20-bit 6 channels", 20, 6, ["-8"]],
    ["12-bit 6 channels", 12, 6, ["-5"]],
    ["4-bit stereo", 4, 2, ["-8", "--lax"]],
    ["7-bit mono", 7, 1, ["-8", "--lax"]],
    ["23-bit stereo", 23, 2, ["-8", "--lax"]],
    ["23-bit 8 channels (depth left to STREAMINFO)", 23, 8, ["-8", "--lax"]],
    ["20-bit 8 channels", 20, 8, ["-5"]],
  ] as const)("%s", async (label, bits, channels, flagList) => {
    const flags: readonly string[] = flagList;
    const stem = label.replace(/[^a-z0-9]+/gi, "-");
    makeWav(`${stem}.wav`, bits, channels);
    encode(`${stem}.wav`, `${stem}.flac`, [...flags]);
    expect(execFileSync("metaflac", ["--show-bps", file(`${stem}.flac`)], { encoding: "utf8" }).trim()).toBe(String(bits));
    const ana = analyse(`${stem}.flac`);
    if (channels === 2 && !flags.includes("--no-mid-side")) {
      // The test's point: every stereo decorrelation, whose side channel is one bit wider, went through the rewrite.
      expect([...ana.assignments].sort()).toEqual(["INDEPENDENT", "LEFT_SIDE", "MID_SIDE", "RIGHT_SIDE"]);
    }
    if (flags.includes("--no-mid-side")) expect([...ana.assignments]).toEqual(["INDEPENDENT"]);
    for (const t of ["CONSTANT", "VERBATIM", "FIXED"]) expect(ana.types).toContain(t);
    if (label === "20-bit stereo -8") {
      // LPC subframes, and subframes that already had wasted bits (their count grows by the rewrite).
      expect(ana.types).toContain("LPC");
      expect([...ana.wasted].some((k) => k !== "0")).toBe(true);
    }
    // Debian's flac decodes the same file to a WAV: our decode of the FLAC must give its samples bit for bit.
    execFileSync("flac", ["-s", "-d", "-f", file(`${stem}.flac`), "-o", file(`${stem}.ref.wav`)]);
    const [flac, wav] = await Promise.all([scan(`${stem}.flac`), scan(`${stem}.wav`)]);
    expect(flac.error).toBeNull();
    expect(flac.format).toMatchObject({ container: "flac", bitDepth: bits, channels, sampleRateHz: RATE });
    expect(flac.metrics!.effectiveBitDepth).toBe(wav.metrics!.effectiveBitDepth);
    expectSameMeasurements(flac, wav);
    const codes = flac.findings.map((f) => f.code);
    expect(codes).not.toContain("decode-error");
    // The MD5 was checked (no unset finding) and held (no mismatch).
    expect(codes).not.toContain("flac-md5-mismatch");
    expect(codes).not.toContain("flac-md5-unset");
    const ours = await decodedSha(file(`${stem}.flac`));
    expect(ours).toEqual(await decodedSha(file(`${stem}.wav`)));
    expect(ours).toEqual(await decodedSha(file(`${stem}.ref.wav`)));
  }, 60_000);

  // Debian's flac does not write escaped Rice partitions (RFC 9639, 9.2.7.1), nor every subframe shape: frames
  // built bit by bit (tests/helpers/flacFrameBuilder.ts) make a file that Debian's flac -d decodes as reference.
  it.each([
    ["20-bit mono, every subframe type and escapes", 20, 0, 1, [[constant(0, -123456)], [verbatim(3, 11)], [lpc(0, false)], [lpc(2, true)], [fixed(1)]]],
    ["12-bit mono, escapes of width 0 and 7", 12, 0, 1, [[fixed(0)], [zeroEscape(0)], [verbatim(1, 4)]]],
    ["20-bit stereo in each decorrelation", 20, -1, 2, [[fixed(1), verbatim(0, 3)], [verbatim(0, 5), verbatim(0, 9)], [verbatim(2, 5), lpc(0, false)], [lpc(1, true), verbatim(1, 2)], [verbatim(0, 7), verbatim(0, 4)]]],
    ["7-bit mono (frames defer their depth to STREAMINFO)", 7, 0, 1, [[verbatim(0, 1)], [fixed(0)], [constant(0, -3)]]],
  ] as const)("hand-built frames, %s: the samples flac -d gives", async (label, bps, assignment, channels, frameSubs) => {
    const stem = label.replace(/[^a-z0-9]+/gi, "-").slice(0, 40);
    const info = streamHeader(bps, channels, frameSubs.length);
    // Stereo: independent, left/side, side/right, mid/side in turn (channel codes 1, 8, 9, 10); the last frame
    // is mid/side with odd side values, whose lowest bit is the one mid lost (RFC 9639, 4.2).
    const codesFor = [1, 8, 9, 10, 10];
    const frames = frameSubs.map((subs, i) => frame(SIZE_CODE[bps] ?? 0, assignment < 0 ? codesFor[i] : assignment, bps, subs as unknown as Sub[], 0, i));
    writeFileSync(file(`${stem}.flac`), Uint8Array.from([...info, ...frames.flatMap((f) => [...f])]));
    // (flac warns that the MD5 is unset: its stderr is kept out of the test output.)
    execFileSync("flac", ["-s", "-d", "-f", file(`${stem}.flac`), "-o", file(`${stem}.ref.wav`)], { stdio: ["ignore", "ignore", "pipe"] });
    const report = await scan(`${stem}.flac`);
    expect(report.metrics!.samplePeakDbfs!).toBeGreaterThan(-60);
    expect(report.error).toBeNull();
    expect(report.format).toMatchObject({ bitDepth: bps, channels });
    expect(report.findings.map((f) => f.code)).not.toContain("decode-error");
    expect(await decodedSha(file(`${stem}.flac`))).toEqual(await decodedSha(file(`${stem}.ref.wav`)));
  }, 60_000);

  it("a 30 s 20-bit FLAC decodes as flac -d; with trailing bytes, cut short, and one with a byte flipped every 9 701: findings as for 24-bit, never a crash", async () => {
    const seconds = 30;
    const q = 2 ** 19;
    const tone = [1, 2].map((seed) => Float32Array.from(pinkNoise({ sampleRateHz: RATE, seconds, rmsDbfs: -20, seed }), (v) => Math.round(v * q) / q));
    const wav = encodeWav(tone, { sampleRateHz: RATE, bitDepth: 24, extensible: true });
    new DataView(wav.buffer).setUint16(20 + 18, 20, true);
    writeFileSync(file("long20.wav"), wav);
    encode("long20.wav", "long20.flac", []);
    const whole = new Uint8Array(readFileSync(file("long20.flac")));
    writeFileSync(file("trailing20.flac"), Uint8Array.from([...whole, ...new Uint8Array(777).fill(0x55)]));
    writeFileSync(file("cut20.flac"), whole.subarray(0, Math.floor(whole.length * 0.6)));
    const dense = whole.slice();
    let damaged = 0;
    for (let p = 20_000; p < dense.length; p += 9_701, damaged++) dense[p] ^= 0x5a;
    writeFileSync(file("dense20.flac"), dense);
    expect(damaged).toBeGreaterThan(100);

    // A mid/side-heavy stream at its default setting: every sample as Debian's flac -d gives it, MD5 holds.
    const plain = await scan("long20.flac");
    expect(plain.findings.map((f) => f.code)).not.toContain("flac-md5-mismatch");
    expect(plain.findings.map((f) => f.code)).not.toContain("decode-error");
    execFileSync("flac", ["-s", "-d", "-f", file("long20.flac"), "-o", file("long20.ref.wav")]);
    expect(await decodedSha(file("long20.flac"))).toEqual(await decodedSha(file("long20.ref.wav")));
    const trailing = await scan("trailing20.flac");
    expect(trailing.findings.find((f) => f.code === "trailing-data")?.message).toMatch(/777/);
    expect(trailing.findings.map((f) => f.code)).not.toContain("decode-error");
    expect(trailing.findings.map((f) => f.code)).not.toContain("flac-md5-mismatch");

    const cut = await scan("cut20.flac");
    const truncated = cut.findings.find((f) => f.code === "truncated");
    expect(truncated?.startSeconds).toBeGreaterThan(0.5 * seconds);
    expect(truncated?.startSeconds).toBeLessThan(0.7 * seconds);

    const hurt = await scan("dense20.flac");
    expect(hurt.error).toBeNull();
    expect(hurt.format!.durationSeconds).toBeCloseTo(seconds, 6);
    expect(hurt.findings.filter((f) => f.code === "decode-error").length).toBeGreaterThan(40);
    expect(hurt.findings.map((f) => f.code)).toContain("flac-md5-mismatch");
  }, 120_000);

  it("a frame whose CRC-16 holds but whose subframe cannot be walked (reserved type) is one decode-error at its time", async () => {
    const frames = [[verbatim(0, 1)], [{ k: 0, type: 2, body: () => {} }], [fixed(0)]].map((subs, i) => frame(SIZE_CODE[20], 0, 20, subs as Sub[], 0, i));
    writeFileSync(file("reserved.flac"), Uint8Array.from([...streamHeader(20, 1, 3), ...frames.flatMap((f) => [...f])]));
    const report = await scan("reserved.flac");
    const errors = report.findings.filter((f) => f.code === "decode-error");
    expect(errors).toHaveLength(1);
    expect(errors[0].startSeconds).toBeCloseTo(BLOCK / RATE, 9);
    expect(errors[0].endSeconds).toBeCloseTo((2 * BLOCK) / RATE, 9);
    expect(errors[0].message).toMatch(/reserved subframe type 2/);
    expect(report.format!.durationSeconds).toBeCloseTo((3 * BLOCK) / RATE, 9);
  });

  it("20-bit frames that leave their rate to STREAMINFO (code 0): each frame gets its rate stated again for libFLAC; flac -t accepts the file", async () => {
    makeWav("rate0.wav", 20, 2, 7);
    encode("rate0.wav", "rate0.flac", ["-8"]);
    const { offsets } = analyse("rate0.flac");
    const bytes = new Uint8Array(readFileSync(file("rate0.flac")));
    deferToStreamInfo(bytes, offsets, { depth: false });
    writeFileSync(file("rate0-deferred.flac"), bytes);
    expect(spawnSync("flac", ["-s", "-t", file("rate0-deferred.flac")]).status).toBe(0);
    const report = await scan("rate0-deferred.flac");
    expect(report.findings.map((f) => f.code)).not.toContain("decode-error");
    expect(report.findings.map((f) => f.code)).not.toContain("flac-md5-mismatch");
    expect(await decodedSha(file("rate0-deferred.flac"))).toEqual(await decodedSha(file("rate0.wav")));
  });

  it("28-bit (flac --lax) measures as its WAV, and its STREAMINFO MD5 is checked (libFLAC's int32 codes)", async () => {
    makeWav("d28.wav", 28, 2);
    encode("d28.wav", "d28.flac", ["-8", "--lax"]);
    expect(execFileSync("metaflac", ["--show-bps", file("d28.flac")], { encoding: "utf8" }).trim()).toBe("28");
    const [flac, wav] = await Promise.all([scan("d28.flac"), scan("d28.wav")]);
    expect(flac.error).toBeNull();
    expect(flac.format).toMatchObject({ container: "flac", bitDepth: 28, channels: 2 });
    expectSameMeasurements(flac, wav);
    expect(flac.findings.map((f) => f.code)).not.toContain("decode-error");
    expect(flac.findings.map((f) => f.code)).not.toContain("flac-md5-unset");
    expect(flac.findings.map((f) => f.code)).not.toContain("flac-md5-mismatch");
  }, 60_000);

  it("a flipped byte inside one frame of a 20-bit FLAC: exactly one decode-error, at that frame's time; the rest decodes", async () => {
    makeWav("flip.wav", 20, 2, 99);
    encode("flip.wav", "flip.flac", ["-8"]);
    const { offsets } = analyse("flip.flac");
    const bytes = new Uint8Array(readFileSync(file("flip.flac")));
    const k = 5;
    const at = Math.floor((offsets[k] + offsets[k + 1]) / 2);
    bytes[at] ^= 0x5a;
    writeFileSync(file("flipped.flac"), bytes);
    const report = await scan("flipped.flac");
    const errors = report.findings.filter((f) => f.code === "decode-error");
    expect(errors).toHaveLength(1);
    // flac -8 frames hold 4096 samples (RFC 9639 block size code 12): frame 5 starts at 5 × 4096.
    expect(errors[0].startSeconds).toBeCloseTo((k * 4096) / RATE, 6);
    expect(errors[0].endSeconds).toBeCloseTo(((k + 1) * 4096) / RATE, 6);
    expect(report.findings.map((f) => f.code)).toContain("flac-md5-mismatch");
    expect(report.format).toMatchObject({ bitDepth: 20, durationSeconds: (6 * SEG) / RATE });
  }, 60_000);
});
