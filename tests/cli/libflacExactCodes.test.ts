/**
 * libFLAC's WebAssembly build with its write callback's divisors set to 1 (cli/src/audio/libflacFrames.ts,
 * useExactCodes): the guard touches nothing unless the four divisors are exactly the pinned build's, and the
 * decoded floats are then the codes themselves. Debian's flac is the outside reference: `flac -d` to raw
 * little-endian signed PCM gives the codes each frame must decode to, at 16 and 24 bits; without the option the
 * package's scale (code / (2^(bits−1) − 1), its src/flac_decoder.c) is kept.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFlacStreamDecoder } from "../../cli/src/audio/flacStreamDecoder.ts";
import { createLibflacFrames, LIBFLAC_DIVISORS_AT, useExactCodes } from "../../cli/src/audio/libflacFrames.ts";
import { createFlacFramer } from "../../shared/src/flac/flacFramer.ts";
import { readFlacLayout } from "../../shared/src/flac/flacLayout.ts";
import { byteSourceFromBytes } from "../../shared/src/wav/byteSource.ts";
import { synthesiseWav } from "../../scripts/bench/synthWav.ts";

const hasFlac = spawnSync("flac", ["--version"], { stdio: "ignore" }).status === 0;

describe("useExactCodes (the guard)", () => {
  const heapWith = (values: number[]): ArrayBuffer => {
    const heap = new ArrayBuffer(LIBFLAC_DIVISORS_AT + 64);
    new Float32Array(heap, LIBFLAC_DIVISORS_AT, values.length).set(values);
    return heap;
  };

  it("sets the four divisors to 1 when they are the pinned build's", () => {
    const heap = heapWith([127, 32767, 8388607, 2147483648, 5]);
    expect(useExactCodes(heap)).toBe(true);
    expect(Array.from(new Float32Array(heap, LIBFLAC_DIVISORS_AT, 5))).toEqual([1, 1, 1, 1, 5]);
  });

  it.each([
    [[127, 32767, 8388607, 0]],
    [[0, 127, 32767, 8388607]],
    [[1, 1, 1, 1]],
  ])("writes nothing for other contents (%j)", (values) => {
    const heap = heapWith(values);
    const before = new Uint8Array(heap).slice();
    expect(useExactCodes(heap)).toBe(false);
    expect(new Uint8Array(heap)).toEqual(before);
  });

  it("writes nothing in a memory too small to hold them", () => {
    expect(useExactCodes(new ArrayBuffer(LIBFLAC_DIVISORS_AT + 8))).toBe(false);
  });
});

describe.runIf(hasFlac)("libFLAC frames with exact codes, against Debian's flac -d", () => {
  let dir = "";
  beforeAll(() => {
    dir = mkdtempSync(path.join(tmpdir(), "tidemark-exactcodes-"));
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it.each([16, 24] as const)("%i-bit stereo: each frame decodes to flac -d's codes, and to code / (2^(bits−1) − 1) without the option", async (bits) => {
    const wav = path.join(dir, `s${bits}.wav`);
    const flac = path.join(dir, `s${bits}.flac`);
    const raw = path.join(dir, `s${bits}.raw`);
    await synthesiseWav({ path: wav, seconds: 3, sampleRateHz: 48000, channels: 2, bitDepth: bits, noise: "white", rmsDbfs: -6, seed: bits });
    execFileSync("flac", ["-s", "-f", "-5", wav, "-o", flac]);
    execFileSync("flac", ["-s", "-f", "-d", "--force-raw-format", "--endian=little", "--sign=signed", flac, "-o", raw]);
    const pcm = readFileSync(raw);
    const width = bits / 8;
    const code = (frame: number, c: number): number => (width === 2 ? pcm.readInt16LE((frame * 2 + c) * 2) : pcm.readIntLE((frame * 2 + c) * 3, 3));
    const file = new Uint8Array(readFileSync(flac));
    const layout = await readFlacLayout(byteSourceFromBytes(file));
    const exact = await createLibflacFrames({ exactCodes: true });
    const scaled = await createLibflacFrames();
    expect(exact.exactCodes).toBe(true);
    expect(scaled.exactCodes).toBe(false);
    const divisor = Math.fround(2 ** (bits - 1) - 1);
    let checked = 0;
    let mismatches = 0;
    const framer = createFlacFramer(layout.streamInfo, layout.dataOffset, {
      frame: (bytes, header) => {
        const a = exact.decode(bytes);
        expect(a.samples).toBe(header.blockSize);
        for (let c = 0; c < 2; c++) {
          for (let i = 0; i < a.samples; i++) if (a.data[c * a.samples + i] !== code(header.sampleNumber + i, c)) mismatches++;
        }
        const b = scaled.decode(bytes);
        for (let c = 0; c < 2; c++) {
          for (let i = 0; i < b.samples; i += 97) expect(b.data[c * b.samples + i]).toBe(Math.fround(Math.fround(code(header.sampleNumber + i, c)) / divisor));
        }
        checked += a.samples;
        return true;
      },
      gap: (sample, frames, _offset, why) => {
        throw new Error(`unexpected gap at ${sample} (${frames}): ${why}`);
      },
    });
    framer.push(file.subarray(layout.dataOffset));
    framer.finish();
    exact.free();
    scaled.free();
    expect(checked).toBe(3 * 48000);
    expect(mismatches).toBe(0);
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
