/**
 * libFLAC's WebAssembly build with our write callback in its table (cli/src/audio/libflacFrames.ts): each frame's
 * codes come out as libFLAC's own 32-bit integers. Debian's flac is the outside reference: `flac -d` to raw
 * little-endian signed PCM gives the codes each frame must decode to, at 16, 24 and 32 bits, and `flac`'s
 * STREAMINFO MD5 must hold for the reader's MD5 input.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFlacStreamDecoder } from "../../cli/src/audio/flacStreamDecoder.ts";
import { createLibflacFrames } from "../../cli/src/audio/libflacFrames.ts";
import { createFlacFramer } from "../../shared/src/flac/flacFramer.ts";
import { readFlacLayout } from "../../shared/src/flac/flacLayout.ts";
import { byteSourceFromBytes } from "../../shared/src/wav/byteSource.ts";
import { synthesiseWav } from "../../scripts/bench/synthWav.ts";

const hasFlac = spawnSync("flac", ["--version"], { stdio: "ignore" }).status === 0;

describe.runIf(hasFlac)("libFLAC frames, against Debian's flac -d", () => {
  let dir = "";
  beforeAll(() => {
    dir = mkdtempSync(path.join(tmpdir(), "tidemark-libflacframes-"));
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it.each([16, 24, 32] as const)("%i-bit stereo: each frame hands out flac -d's codes, as libFLAC's int32", async (bits) => {
    const wav = path.join(dir, `s${bits}.wav`);
    const flac = path.join(dir, `s${bits}.flac`);
    const raw = path.join(dir, `s${bits}.raw`);
    if (bits === 32) execFileSync("sox", ["-n", "-r", "48000", "-c", "2", "-b", "32", "-e", "signed-integer", wav, "synth", "3", "whitenoise", "vol", "0.9"]);
    else await synthesiseWav({ path: wav, seconds: 3, sampleRateHz: 48000, channels: 2, bitDepth: bits, noise: "white", rmsDbfs: -6, seed: bits });
    execFileSync("flac", ["-s", "-f", "-5", wav, "-o", flac]);
    execFileSync("flac", ["-s", "-f", "-d", "--force-raw-format", "--endian=little", "--sign=signed", flac, "-o", raw]);
    const pcm = readFileSync(raw);
    const width = bits / 8;
    const code = (frame: number, c: number): number => pcm.readIntLE((frame * 2 + c) * width, width);
    const file = new Uint8Array(readFileSync(flac));
    const layout = await readFlacLayout(byteSourceFromBytes(file));
    expect(layout.streamInfo.bitsPerSample).toBe(bits);
    const frames = await createLibflacFrames();
    let checked = 0;
    let mismatches = 0;
    const framer = createFlacFramer(layout.streamInfo, layout.dataOffset, {
      frame: (bytes, header) => {
        const a = frames.decode(bytes);
        expect(a.error).toBeNull();
        expect(a.samples).toBe(header.blockSize);
        expect(a.channels).toBe(2);
        for (let c = 0; c < 2; c++) {
          for (let i = 0; i < a.samples; i++) if (a.codes[a.offsets[c] + i] !== code(header.sampleNumber + i, c)) mismatches++;
        }
        checked += a.samples;
        return true;
      },
      gap: (sample, n, _offset, why) => {
        throw new Error(`unexpected gap at ${sample} (${n}): ${why}`);
      },
    });
    framer.push(file.subarray(layout.dataOffset));
    framer.finish();
    frames.free();
    expect(checked).toBe(3 * 48000);
    expect(mismatches).toBe(0);
  });

  it("an instance freed after a clean file serves the next ones (pooled): 60 files in turn, every frame as flac -d's", async () => {
    const flac = path.join(dir, "s16.flac");
    const raw = path.join(dir, "s16.raw");
    const pcm = readFileSync(raw);
    const file = new Uint8Array(readFileSync(flac));
    const layout = await readFlacLayout(byteSourceFromBytes(file));
    let mismatches = 0;
    let checked = 0;
    for (let round = 0; round < 60; round++) {
      const frames = await createLibflacFrames();
      const framer = createFlacFramer(layout.streamInfo, layout.dataOffset, {
        frame: (bytes, header) => {
          const a = frames.decode(bytes);
          for (let c = 0; c < 2; c++) {
            for (let i = 0; i < a.samples; i += 7) if (a.codes[a.offsets[c] + i] !== pcm.readInt16LE(((header.sampleNumber + i) * 2 + c) * 2)) mismatches++;
          }
          checked += a.samples;
          return true;
        },
        gap: () => {
          throw new Error("unexpected gap");
        },
      });
      framer.push(file.subarray(layout.dataOffset));
      framer.finish();
      frames.free();
    }
    expect(checked).toBe(60 * 3 * 48000);
    expect(mismatches).toBe(0);
  });

  it("decode() after free() is refused (the instance may be another file's by then); free() twice is harmless", async () => {
    const frames = await createLibflacFrames();
    frames.free();
    frames.free();
    expect(() => frames.decode(new Uint8Array(16))).toThrow(/decode\(\) after free\(\)/);
    expect(() => frames.restart()).toThrow(/restart\(\) after free\(\)/);
  });

  it("32-bit stereo through the reader: STREAMINFO's MD5 is checked (it holds), and a changed MD5 is a mismatch", async () => {
    const flac = path.join(dir, "s32.flac");
    const bytes = new Uint8Array(readFileSync(flac));
    const scan = async (file: Uint8Array): Promise<string[]> => {
      const layout = await readFlacLayout(byteSourceFromBytes(file));
      const decoder = await createFlacStreamDecoder(layout, 4096, () => undefined);
      for (let at = 0; at < file.length; at += 65536) await decoder.push(file.subarray(at, Math.min(file.length, at + 65536)), at);
      await decoder.finish();
      return decoder.findings.map((f) => f.code);
    };
    expect(await scan(bytes)).toEqual([]);
    // STREAMINFO's MD5 is its last 16 bytes (RFC 9639, 8.2): the block starts after "fLaC" and a 4-byte header.
    const changed = bytes.slice();
    changed[8 + 34 - 1] ^= 0x01;
    expect(await scan(changed)).toEqual(["flac-md5-mismatch"]);
  });

  it("8-bit stereo from sox (the JavaScript rescaling, one MD5 byte a sample): samples as flac -d's, and flac's STREAMINFO MD5 holds", async () => {
    const wav = path.join(dir, "s8.wav");
    const flac = path.join(dir, "s8.flac");
    const raw = path.join(dir, "s8.raw");
    execFileSync("sox", ["-n", "-r", "48000", "-c", "2", "-b", "8", "-e", "unsigned-integer", wav, "synth", "2", "whitenoise", "vol", "0.7"]);
    execFileSync("flac", ["-s", "-f", "-5", wav, "-o", flac]);
    execFileSync("flac", ["-s", "-f", "-d", "--force-raw-format", "--endian=little", "--sign=signed", flac, "-o", raw]);
    const pcm = new Int8Array(readFileSync(raw).buffer.slice(0));
    const bytes = new Uint8Array(readFileSync(flac));
    const layout = await readFlacLayout(byteSourceFromBytes(bytes));
    expect(layout.streamInfo.bitsPerSample).toBe(8);
    let frames = 0;
    let mismatches = 0;
    const decoder = await createFlacStreamDecoder(layout, 4096, (block) => {
      for (let c = 0; c < 2; c++) {
        for (let i = 0; i < block.frames; i++) if (block.channels[c][i] !== pcm[(block.startFrame + i) * 2 + c] / 128) mismatches++;
      }
      frames += block.frames;
    });
    for (let at = 0; at < bytes.length; at += 65536) await decoder.push(bytes.subarray(at, Math.min(bytes.length, at + 65536)), at);
    await decoder.finish();
    expect(frames).toBe(2 * 48000);
    expect(mismatches).toBe(0);
    // Checked (no unset finding) and equal (no mismatch): the MD5 input bytes are the codes flac hashed.
    expect(decoder.findings.map((f) => f.code)).toEqual([]);
  });
});
