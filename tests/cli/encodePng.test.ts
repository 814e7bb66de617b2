import { execFileSync } from "node:child_process";
import { PNG } from "pngjs";
import { describe, expect, it } from "vitest";
import { encodePng, encodePngAsync } from "../../cli/src/render/encodePng.ts";
import { installFontTypesetter } from "../../cli/src/render/fontTypesetter.ts";
import { renderSpectrogramImage } from "../../shared/src/render/spectrogramImage.ts";
import { renderWaveformImage } from "../../shared/src/render/waveformImage.ts";
import { createSpectralAnalyser } from "../../shared/src/spectral/spectralAnalyser.ts";
import type { RgbaImage } from "../../shared/src/types/analysis.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../../shared/src/types/settings.ts";
import { seededRandom } from "../fixtures/synth.ts";

function testImage(width: number, height: number): RgbaImage {
  const data = new Uint8Array(width * height * 4);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = (y * width + x) * 4;
      data[i] = (x * 7) & 255;
      data[i + 1] = (y * 13) & 255;
      data[i + 2] = (x ^ y) & 255;
      data[i + 3] = 255;
    }
  }
  return { width, height, data };
}

/** Decodes a PNG with Debian's ffmpeg (an independent decoder) into packed RGB bytes. */
function decodeWithFfmpeg(png: Buffer): Buffer {
  return execFileSync("ffmpeg", ["-v", "error", "-f", "png_pipe", "-i", "pipe:0", "-f", "rawvideo", "-pix_fmt", "rgb24", "pipe:1"], {
    input: png,
    maxBuffer: 1 << 26,
  });
}

describe("encodePng", () => {
  const image = testImage(37, 23);
  const png = encodePng(image);

  it("writes the PNG signature and an IHDR of the image's size", () => {
    // ISO/IEC 15948:2004, 5.2 (signature) and 11.2.2 (IHDR: width, height, bit depth 8, colour type 2 = RGB).
    expect([...png.subarray(0, 8)]).toEqual([137, 80, 78, 71, 13, 10, 26, 10]);
    expect(png.toString("latin1", 12, 16)).toBe("IHDR");
    expect(png.readUInt32BE(16)).toBe(37);
    expect(png.readUInt32BE(20)).toBe(23);
    expect([png[24], png[25]]).toEqual([8, 2]);
  });

  it("decodes with pngjs to the same pixels", () => {
    const back = PNG.sync.read(png);
    expect([back.width, back.height]).toEqual([37, 23]);
    expect(Buffer.compare(back.data, Buffer.from(image.data))).toBe(0);
  });

  it("decodes with ffmpeg to the same pixels", () => {
    const rgb = decodeWithFfmpeg(png);
    expect(rgb.length).toBe(37 * 23 * 3);
    for (let p = 0; p < 37 * 23; p++) {
      expect([rgb[3 * p], rgb[3 * p + 1], rgb[3 * p + 2]]).toEqual([image.data[4 * p], image.data[4 * p + 1], image.data[4 * p + 2]]);
    }
  });

  it("writes the very bytes pngjs writes with the same options (RGB, Paeth rows, Z_RLE), translucent pixels included", () => {
    // pngjs (npm) is the reference encoder the CLI used before issue #22: same conversion, filter and zlib call.
    const rnd = seededRandom(22);
    for (const [w, h] of [[1, 1], [2, 3], [37, 23], [300, 41]]) {
      const data = new Uint8Array(w * h * 4);
      for (let i = 0; i < data.length; i++) data[i] = Math.floor(rnd() * 256);
      // Mostly opaque, as our images are, with some translucent and fully transparent pixels.
      for (let p = 0; p < w * h; p++) if (rnd() < 0.7) data[4 * p + 3] = 255;
      const source = { width: w, height: h, data: Buffer.from(data) } as unknown as PNG;
      const reference = PNG.sync.write(source, { colorType: 2, inputColorType: 6, inputHasAlpha: true, filterType: 4 });
      expect(Buffer.compare(encodePng({ width: w, height: h, data }), reference), `${w}×${h}`).toBe(0);
    }
  });

  it("rejects data that does not match the size", () => {
    expect(() => encodePng({ width: 10, height: 10, data: new Uint8Array(399) })).toThrow(/must hold 400 bytes, got 399/);
    expect(() => encodePng({ width: 0, height: 10, data: new Uint8Array(0) })).toThrow(/positive whole pixels, got 0×10/);
  });
});

// The CLI's typesetter, installed before any timing: what a scan does on its first image.
installFontTypesetter();

/** CPU time of this test process (vitest runs each file in its own fork), so parallel test files do not count. */
const cpuMs = (): number => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
};

describe("spectrogram pipeline", () => {
  it("renders 60 s of 48 kHz stereo noise to PNGs of the asked size, and reports its speed", () => {
    const rate = 48000;
    const seconds = 60;
    const total = rate * seconds;
    const blockFrames = 65536;
    const rnd = seededRandom(60);
    const pool = [new Float32Array(rate * 5), new Float32Array(rate * 5)];
    for (const p of pool) for (let i = 0; i < p.length; i++) p[i] = 0.3 * (2 * rnd() - 1);
    const block = [new Float32Array(blockFrames), new Float32Array(blockFrames)];
    let copyMs = 0;
    const started = cpuMs();
    const analyser = createSpectralAnalyser(
      { sampleRateHz: rate, channels: 2, bitDepth: 24, encoding: "pcm", totalFrames: total },
      DEFAULT_ANALYSIS_SETTINGS,
    );
    for (let start = 0; start < total; start += blockFrames) {
      const frames = Math.min(blockFrames, total - start);
      const t = cpuMs();
      const offset = (start * 7) % (pool[0].length - blockFrames);
      for (let c = 0; c < 2; c++) block[c].set(pool[c].subarray(offset, offset + frames));
      copyMs += cpuMs() - t;
      analyser.push({ channels: block, frames, startFrame: start });
    }
    const result = analyser.finish();
    const analysedAt = cpuMs();
    const spectrogram = encodePng(renderSpectrogramImage(result.spectrogram, { width: 1600, height: 600, title: "noise.wav" }));
    const waveform = encodePng(renderWaveformImage(result.waveform, { width: 1600, height: 120 }));
    const finished = cpuMs();
    const elapsedMs = finished - started - copyMs;
    const realtime = (seconds * 1000) / elapsedMs;
    console.info(
      `spectral pipeline, 60 s 48 kHz stereo (CPU time): analyse ${(analysedAt - started - copyMs).toFixed(0)} ms, ` +
        `render + encode ${(finished - analysedAt).toFixed(0)} ms → ${realtime.toFixed(0)}× realtime`,
    );
    const decoded = PNG.sync.read(spectrogram);
    expect([decoded.width, decoded.height]).toEqual([1600, 600]);
    expect([PNG.sync.read(waveform).width, PNG.sync.read(waveform).height]).toEqual([1600, 120]);
    // Loose floor for a loaded CI machine (this includes JIT warm-up); issue #8 holds the whole pipeline
    // to 150× on 600 s, where this part's fixed cost (images, fine spectrum) weighs ten times less.
    expect(realtime).toBeGreaterThan(10);
  });
});

describe("encodePngAsync", () => {
  it("writes the very bytes encodePng writes (the deflate on the thread pool is the same zlib call)", async () => {
    const random = seededRandom(5);
    const data = new Uint8Array(97 * 41 * 4);
    for (let i = 0; i < data.length; i++) data[i] = i % 4 === 3 ? (random() < 0.1 ? Math.floor(random() * 255) : 255) : Math.floor(random() * 256);
    const image = { width: 97, height: 41, data };
    const [sync, pooled] = [encodePng(image), await encodePngAsync(image)];
    expect(pooled.length).toBeGreaterThan(100);
    expect(Buffer.compare(pooled, sync)).toBe(0);
    await expect(encodePngAsync({ width: 2, height: 2, data: new Uint8Array(3) })).rejects.toThrow(/must hold 16 bytes, got 3/);
  });
});
