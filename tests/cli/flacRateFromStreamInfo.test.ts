/**
 * FLAC frames that leave their sample rate to STREAMINFO (rate code 0, RFC 9639, 9.1.2): Debian's flac 1.4 writes
 * them for every rate its frame header cannot code (above 65 535 Hz and not a multiple of 10 Hz, e.g. 70 001 Hz;
 * 46 000 Hz gets code 12, 44 101 Hz code 13, 44 110 Hz code 14). libFLAC's WebAssembly build, given STREAMINFO
 * so it could decode them, faulted (out-of-bounds memory access) a few frames later: 29 of 154 such files in a
 * sweep on 2026-12-05, 2 to 8 channels, every block size. The reader now never gives it STREAMINFO and states the
 * rate in each header instead (shared/src/flac/flacExplicitHeader.ts). The reference is Debian's flac: the
 * decoded samples must be `flac -d`'s (SHA-256 of the floats) and the loudness that of the source WAV.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { readFileSync, writeFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { encodeWav } from "../fixtures/wavWriter.ts";
import { decodedSha } from "../helpers/decodedSha.ts";
import { scanFolder } from "../helpers/scanFolder.ts";

const has = (cmd: string, arg = "--version"): boolean => spawnSync(cmd, [arg], { stdio: "ignore" }).status === 0;
const toolsPresent = has("sox") && has("flac");

const { file, scan } = scanFolder("flac-rate");

/** The rate code of every frame header (byte 2's low nibble), at the offsets Debian's flac's own analysis (flac -a) gives. */
function rateCodes(flac: string): number[] {
  execFileSync("flac", ["-s", "-a", "-f", file(flac), "-o", file(`${flac}.ana`)]);
  const bytes = readFileSync(file(flac));
  return [...readFileSync(file(`${flac}.ana`), "latin1").matchAll(/^frame=\d+\toffset=(\d+)/gm)].map((m) => bytes[Number(m[1]) + 2] & 0x0f);
}

/** Debian's flac -d output: the reference samples. */
function referenceWav(flac: string): string {
  execFileSync("flac", ["-s", "-d", "-f", file(flac), "-o", file(`${flac}.ref.wav`)]);
  return file(`${flac}.ref.wav`);
}

/** WAVE_FORMAT_EXTENSIBLE speaker masks flac accepts for each channel count (RFC 9639, 9.1.3's orders). */
const MASKS: Record<number, number> = { 1: 0x4, 2: 0x3, 3: 0x7, 4: 0x33, 5: 0x37, 6: 0x3f, 7: 0x70f, 8: 0x63f };

/**
 * An extensible WAV whose wValidBitsPerSample is `bits` (flac keeps it as the stream's depth): tones on even
 * channels, noise on odd ones (fixed seed), so frames are of every size.
 */
function makeWav(name: string, rate: number, bits: number, channels: number, seconds: number): void {
  let seed = 7 + channels;
  const noise = (): number => ((seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32) * 2 - 1;
  const full = 2 ** (bits - 1);
  const frames = Math.round(rate * seconds);
  const planar = Array.from({ length: channels }, (_, c) => {
    const x = new Float32Array(frames);
    for (let i = 0; i < frames; i++) {
      const v = c % 2 ? 0.4 * noise() : 0.7 * Math.sin((2 * Math.PI * 220 * (c + 1) * i) / rate);
      x[i] = Math.round(v * (full - 1)) / full;
    }
    return x;
  });
  const container = (Math.ceil(bits / 8) * 8) as 16 | 24;
  const wav = encodeWav(planar, { sampleRateHz: rate, bitDepth: container, extensible: true, channelMask: MASKS[channels] });
  new DataView(wav.buffer, wav.byteOffset).setUint16(20 + 18, bits, true);
  writeFileSync(file(name), wav);
}

describe.runIf(toolsPresent)("FLAC frames that leave their rate to STREAMINFO decode as Debian's flac -d decodes them", () => {
  it.each([
    ["8-channel 24-bit at 70 001 Hz", 24],
    ["8-channel 16-bit at 70 001 Hz", 16],
  ] as const)("%s (sox's tones, as the WAV measures)", async (label, bits) => {
    const stem = label.replace(/[^a-z0-9]+/gi, "-");
    const tones = Array.from({ length: 8 }, (_, c) => ["sine", String(220 * (c + 1))]).flat();
    execFileSync("sox", ["-n", "-r", "70001", "-b", String(bits), "-c", "8", file(`${stem}.wav`), "synth", "2", ...tones, "gain", "-3"]);
    execFileSync("flac", ["-s", "-f", "--lax", file(`${stem}.wav`), "-o", file(`${stem}.flac`)]);
    // Every frame defers its rate: the case under test.
    expect(new Set(rateCodes(`${stem}.flac`))).toEqual(new Set([0]));
    const [flac, wav] = await Promise.all([scan(`${stem}.flac`), scan(`${stem}.wav`)]);
    expect(flac.error).toBeNull();
    expect(flac.format).toMatchObject({ container: "flac", bitDepth: bits, channels: 8, sampleRateHz: 70001 });
    expect(flac.format!.durationSeconds).toBeCloseTo(2, 9);
    expect(Math.abs(flac.metrics!.integratedLufs! - wav.metrics!.integratedLufs!)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(flac.metrics!.samplePeakDbfs! - wav.metrics!.samplePeakDbfs!)).toBeLessThanOrEqual(0.01);
    const codes = flac.findings.map((f) => f.code);
    expect(codes).not.toContain("decode-error");
    expect(codes).not.toContain("flac-md5-mismatch");
    expect(codes).not.toContain("flac-md5-unset");
    expect(await decodedSha(file(`${stem}.flac`))).toEqual(await decodedSha(referenceWav(`${stem}.flac`)));
  }, 60_000);

  it("a 20-bit 8-channel stream at 70 001 Hz (rewritten to 24 bits, then given its rate) decodes as flac -d's", async () => {
    makeWav("odd.wav", 70001, 20, 8, 1.3);
    execFileSync("flac", ["-s", "-f", "--lax", file("odd.wav"), "-o", file("odd.flac")]);
    expect(new Set(rateCodes("odd.flac"))).toEqual(new Set([0]));
    const report = await scan("odd.flac");
    expect(report.error).toBeNull();
    expect(report.format).toMatchObject({ bitDepth: 20, channels: 8, sampleRateHz: 70001 });
    expect(report.findings.map((f) => f.code)).not.toContain("decode-error");
    expect(report.findings.map((f) => f.code)).not.toContain("flac-md5-mismatch");
    expect(await decodedSha(file("odd.flac"))).toEqual(await decodedSha(referenceWav("odd.flac")));
  }, 60_000);

  it("1 to 8 channels × rate codes 0, 10, 12, 13, 14 × block sizes 100 to 16 384: every file decodes as flac -d's", async () => {
    // [rate, the code Debian's flac gives it]; rate code 0 across every block-size code (RFC 9639, 9.1.1), the
    // others at flac's default block size.
    const rates = [[70001, 0], [46000, 12], [44101, 13], [44110, 14], [48000, 10]] as const;
    const wrong: string[] = [];
    let decoded = 0;
    for (let channels = 1; channels <= 8; channels++) {
      for (const [rate, code] of rates) {
        for (const block of code === 0 ? [100, 192, 576, 1000, 4096, 4608, 16384] : [4096]) {
          const tag = `${channels} ch, ${rate} Hz, block ${block}`;
          makeWav("m.wav", rate, 16, channels, 1.3);
          execFileSync("flac", ["-s", "-f", "--lax", "-b", String(block), file("m.wav"), "-o", file("m.flac")]);
          const codes = new Set(rateCodes("m.flac"));
          if (codes.size !== 1 || !codes.has(code)) wrong.push(`${tag}: rate codes ${[...codes].join(", ")}, ${code} expected`);
          try {
            const got = await decodedSha(file("m.flac"));
            if (JSON.stringify(got) !== JSON.stringify(await decodedSha(referenceWav("m.flac")))) wrong.push(`${tag}: samples differ from flac -d's`);
            else decoded++;
          } catch (e) {
            wrong.push(`${tag}: ${e instanceof Error ? e.message : String(e)}`);
          }
        }
      }
    }
    expect(wrong).toEqual([]);
    expect(decoded).toBe(8 * (7 + 4));
  }, 300_000);
});
