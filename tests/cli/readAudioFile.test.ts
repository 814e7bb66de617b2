import { createHash } from "node:crypto";
import { execFileSync } from "node:child_process";
import { chmod, mkdir, mkdtemp, readFile, rm, symlink, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import { AudioFileError } from "../../cli/src/audio/errors.ts";
import { readAudioFile, withHead } from "../../cli/src/audio/readAudioFile.ts";
import { readAiffLayout } from "../../shared/src/aiff/aiffLayout.ts";
import { readFlacLayout } from "../../shared/src/flac/flacLayout.ts";
import { byteSourceFromBytes, type ByteSource } from "../../shared/src/wav/byteSource.ts";
import { readWavLayout } from "../../shared/src/wav/wavLayout.ts";
import { WavFormatError } from "../../shared/src/wav/errors.ts";
import { sine, whiteNoise } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "tidemark-read-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

async function writeWav(name: string, bytes: Uint8Array): Promise<string> {
  const path = join(dir, name);
  await writeFile(path, bytes);
  return path;
}

/** Reads a file through readAudioFile and collects the decoded planar samples. */
async function readAll(path: string, blockFrames?: number) {
  let out: Float32Array[] = [];
  const blockStarts: number[] = [];
  const result = await readAudioFile(path, {
    blockFrames,
    onOpen: (info) => {
      out = Array.from({ length: info.stream.channels }, () => new Float32Array(info.stream.totalFrames));
      return (block) => {
        blockStarts.push(block.startFrame);
        for (let c = 0; c < out.length; c++) out[c].set(block.channels[c].subarray(0, block.frames), block.startFrame);
      };
    },
  });
  return { result, out, blockStarts };
}

describe("readAudioFile", () => {
  it("hashes every byte: SHA-256 equals node:crypto's over the whole file read at once", async () => {
    // 25 s of 48 kHz 24-bit stereo is 7.2 MB: several 4 MiB buffers, frames straddling their boundaries.
    const left = whiteNoise({ sampleRateHz: 48000, seconds: 25, rmsDbfs: -18, seed: 5 });
    const right = sine({ frequencyHz: 1000, sampleRateHz: 48000, seconds: 25, peakDbfs: -3 });
    const path = await writeWav("long.wav", encodeWav([left, right], { sampleRateHz: 48000, bitDepth: 24, bext: { description: "x" } }));
    const whole = await readFile(path);
    const { result, out, blockStarts } = await readAll(path);
    expect(result.sha256).toBe(createHash("sha256").update(whole).digest("hex"));
    expect(result.sizeBytes).toBe(whole.length);
    expect(result.info.format).toMatchObject({ container: "bwf", encoding: "pcm", sampleRateHz: 48000, bitDepth: 24, channels: 2 });
    expect(result.info.format.durationSeconds).toBeCloseTo(25, 9);
    expect(blockStarts.length).toBe(Math.ceil((25 * 48000) / 65536));
    // Samples straddling buffer boundaries decode like the rest (24-bit quantisation: 2^-23).
    let worst = 0;
    for (let i = 0; i < left.length; i++) worst = Math.max(worst, Math.abs(out[0][i] - left[i]), Math.abs(out[1][i] - right[i]));
    expect(worst).toBeLessThanOrEqual(2 ** -23);
    expect(result.timings.readMs).toBeGreaterThanOrEqual(0);
  });

  it("decodes what wavefile decodes (independent reader), for every block size", async () => {
    const bytes = encodeWav(
      [whiteNoise({ sampleRateHz: 44100, seconds: 0.3, rmsDbfs: -10, seed: 9 }), sine({ frequencyHz: 60, sampleRateHz: 44100, seconds: 0.3 })],
      { sampleRateHz: 44100, bitDepth: 16, extraChunks: [{ id: "JUNK", body: new Uint8Array(7), beforeFmt: true }] },
    );
    const path = await writeWav("small.wav", bytes);
    const theirs = new WaveFile(bytes).getSamples(false, Float64Array) as unknown as Float64Array[];
    for (const blockFrames of [1, 997, 65536]) {
      const { out } = await readAll(path, blockFrames);
      let worst = 0;
      for (let c = 0; c < 2; c++) for (let i = 0; i < out[c].length; i++) worst = Math.max(worst, Math.abs(out[c][i] - theirs[c][i] / 32768));
      expect(worst).toBeLessThan(1e-9);
    }
  });

  // Issue #22: the header is walked from the file's first read, and the read buffers go on to the next files.
  // Two guards keep a file's header its own: the reader hands the walkers copies (withHead), and the walkers
  // copy what they keep. Each is checked alone below, so neither hides a break in the other.
  describe("header bytes from reused read buffers", () => {
    /** Inputs with every kind of header a walker keeps something of: STREAMINFO and Vorbis comments, bext and LIST INFO, AIFF text chunks. */
    async function headerFiles(): Promise<{ name: string; bytes: Uint8Array; walk: (s: ByteSource) => Promise<unknown> }[]> {
      const wavPath = await writeWav("for-headers.wav", encodeWav([sine({ frequencyHz: 440, sampleRateHz: 44100, seconds: 0.5, peakDbfs: -6 })], { sampleRateHz: 44100, bitDepth: 16 }));
      // Debian's flac and ffmpeg (reference encoders) write the FLAC metadata blocks and the AIFF text chunks.
      execFileSync("flac", ["--silent", "--force", "-T", "TITLE=Harbourside reel 7", "-T", "ARTIST=Harbourside Sound Archive", "-o", join(dir, "header.flac"), wavPath]);
      execFileSync("ffmpeg", ["-loglevel", "error", "-y", "-i", wavPath, "-metadata", "title=Reel 7", "-metadata", "author=Harbourside Sound Archive", "-c:a", "pcm_s16be", "-f", "aiff", join(dir, "header.aiff")]);
      const bwf = encodeWav([whiteNoise({ sampleRateHz: 48000, seconds: 0.2, rmsDbfs: -20, seed: 3 })], {
        sampleRateHz: 48000, bitDepth: 24, bext: { description: "Harbourside reel 7, side A", codingHistory: "A=ANALOGUE,M=stereo,T=Studer A807\r\n" }, info: { INAM: "Reel 7", IART: "Harbourside" },
      });
      return [
        { name: "FLAC", bytes: new Uint8Array(await readFile(join(dir, "header.flac"))), walk: readFlacLayout },
        { name: "AIFF", bytes: new Uint8Array(await readFile(join(dir, "header.aiff"))), walk: readAiffLayout },
        { name: "BWF", bytes: bwf, walk: readWavLayout },
      ];
    }

    /** A walker's result as plain data, typed arrays as their bytes, so a comparison sees every field. */
    const snapshot = (value: unknown): string => JSON.stringify(value, (_key, v: unknown) => (ArrayBuffer.isView(v) ? Array.from(new Uint8Array(v.buffer, v.byteOffset, v.byteLength)) : v));

    it("the walkers keep nothing of the bytes they read: handed views into one buffer that is then overwritten, their results stay", async () => {
      for (const { name, bytes, walk } of await headerFiles()) {
        // The reference: the same walk over bytes nobody overwrites.
        const expected = snapshot(await walk(byteSourceFromBytes(Uint8Array.from(bytes))));
        // The worst reader: every read a view of one buffer, overwritten afterwards as the next file's read would.
        const buffer = Uint8Array.from(bytes);
        const layout = await walk({ sizeBytes: buffer.length, readAt: async (offset, length) => buffer.subarray(offset, Math.min(buffer.length, offset + length)) });
        buffer.fill(0xa5);
        expect(snapshot(layout), name).toBe(expected);
        expect(expected, name).toMatch(/Harbourside|Reel 7/);
      }
    });

    it("the reader hands the walkers copies of its read buffer: overwriting the buffer leaves what they got", async () => {
      for (const { name, bytes } of await headerFiles()) {
        const head = Uint8Array.from(bytes.subarray(0, 4096));
        const source = withHead(byteSourceFromBytes(bytes), head);
        const got = [await source.readAt(0, 12), await source.readAt(8, 64), await source.readAt(100, 400)];
        const copies = got.map((b) => Array.from(b));
        head.fill(0xa5);
        expect(got.map((b) => Array.from(b)), name).toEqual(copies);
        expect(copies[0], name).toEqual(Array.from(bytes.subarray(0, 12)));
      }
    });

    it("end to end: each file's header and metadata stay its own while its read buffers serve later files", async () => {
      const files = await headerFiles();
      const paths = await Promise.all(files.map(({ name, bytes }) => writeWav(`kept-${name}`, bytes)));
      const read = await Promise.all(paths.map((p) => readAudioFile(p, { onOpen: () => () => undefined })));
      const before = read.map((r) => snapshot(r.info));
      // Other files through the same buffers, two at once.
      for (let i = 0; i < 3; i++) await Promise.all([readAll(paths[2]), readAll(paths[1]), readAll(paths[0])]);
      expect(read.map((r) => snapshot(r.info))).toEqual(before);
      expect(before.join()).toContain("Harbourside reel 7, side A");
      expect(read[2].sha256).toBe(createHash("sha256").update(files[2].bytes).digest("hex"));
    });
  });

  it("reuses the block arrays (flat memory)", async () => {
    const path = await writeWav("reuse.wav", encodeWav([whiteNoise({ sampleRateHz: 8000, seconds: 1, rmsDbfs: -20 })], { sampleRateHz: 8000, bitDepth: 16 }));
    const seen = new Set<Float32Array>();
    await readAudioFile(path, { blockFrames: 1000, onOpen: () => (block) => void seen.add(block.channels[0]) });
    expect(seen.size).toBe(1);
  });

  it("only hashes when no consumer is returned", async () => {
    const bytes = encodeWav([new Float32Array([NaN, 1, 2])], { sampleRateHz: 8000, bitDepth: 32, encoding: "float" });
    const path = await writeWav("hash-only.wav", bytes);
    const result = await readAudioFile(path);
    expect(result.sha256).toBe(createHash("sha256").update(bytes).digest("hex"));
    expect(result.nonFiniteSamples).toBe(0);
  });

  it("counts non-finite float samples", async () => {
    const bytes = encodeWav([Float32Array.from([0.5, NaN, -Infinity, 0.25])], { sampleRateHz: 8000, bitDepth: 32, encoding: "float" });
    const { result, out } = await readAll(await writeWav("nan.wav", bytes));
    expect(result.nonFiniteSamples).toBe(2);
    expect(result.firstNonFiniteFrame).toBe(1);
    expect(result.lastNonFiniteFrame).toBe(2);
    expect(Array.from(out[0])).toEqual([0.5, 0, 0, 0.25]);
  });

  it("measures a truncated file on what is there", async () => {
    const bytes = encodeWav([whiteNoise({ sampleRateHz: 48000, seconds: 1, rmsDbfs: -20 })], { sampleRateHz: 48000, bitDepth: 24 });
    const cut = bytes.subarray(0, bytes.length - 30001);
    const { result, out } = await readAll(await writeWav("cut.wav", cut));
    expect(result.isTruncated).toBe(true);
    // 48000 frames × 3 bytes − 30001 bytes = 113999 bytes → 37999 whole frames.
    expect(result.info.stream.totalFrames).toBe(37999);
    expect(out[0].length).toBe(37999);
    expect(result.sha256).toBe(createHash("sha256").update(cut).digest("hex"));
  });

  it("rethrows malformed audio as WavFormatError with its code", async () => {
    const path = await writeWav("text.wav", new TextEncoder().encode("not audio at all, just words\n"));
    await expect(readAudioFile(path)).rejects.toSatisfy((e) => e instanceof WavFormatError && e.code === "not-riff");
    await expect(readAudioFile(path)).rejects.toThrow(/not a RIFF file/);
  });

  it.each([
    ["not-found", async () => join(dir, "missing.wav"), /no such file/],
    ["is-directory", async () => {
      const p = join(dir, "folder.wav");
      await mkdir(p, { recursive: true });
      return p;
    }, /is a directory/],
    ["symlink-loop", async () => {
      const a = join(dir, "loop-a.wav");
      const b = join(dir, "loop-b.wav");
      await symlink(b, a);
      await symlink(a, b);
      return a;
    }, /symbolic links/],
    ["not-a-file", async () => {
      const p = join(dir, "pipe.wav");
      execFileSync("mkfifo", [p]);
      return p;
    }, /not a regular file/],
  ] as const)("I/O failure %s has a stable code and a one-line message", async (code, makePath, message) => {
    const path = await makePath();
    const error = await readAudioFile(path).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(AudioFileError);
    expect(error).toMatchObject({ code, message: expect.stringMatching(message) });
    expect((error as Error).message).not.toMatch(/\n/);
  });

  it.skipIf(process.getuid?.() === 0)("permission-denied", async () => {
    const path = await writeWav("locked.wav", encodeWav([new Float32Array(10)], { sampleRateHz: 8000, bitDepth: 16 }));
    await chmod(path, 0o000);
    await expect(readAudioFile(path)).rejects.toMatchObject({ code: "permission-denied" });
  });

  it("stops when aborted, before or during the read", async () => {
    const path = await writeWav("abort.wav", encodeWav([whiteNoise({ sampleRateHz: 48000, seconds: 60, rmsDbfs: -20 })], { sampleRateHz: 48000, bitDepth: 24 }));
    const early = new AbortController();
    early.abort();
    await expect(readAudioFile(path, { signal: early.signal })).rejects.toThrow(/abort/i);
    const during = new AbortController();
    let blocks = 0;
    await expect(
      readAudioFile(path, {
        signal: during.signal,
        onOpen: () => () => {
          blocks++;
          during.abort();
        },
      }),
    ).rejects.toThrow(/abort/i);
    // 60 s at 48 kHz is 44 blocks of 65536 frames; the read stopped within the next buffer.
    expect(blocks).toBeGreaterThan(0);
    expect(blocks).toBeLessThan(44);
  });
});
