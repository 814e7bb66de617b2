/**
 * Test material from Debian's tools: speech from espeak-ng, resampling and lossy encodes through sox and
 * ffmpeg. Each helper says whether its tool is present so tests can `describe.runIf(...)`; the CI harness
 * installs them (scripts/run-tests.ts).
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

const present = (cmd: string, args: string[]): boolean => spawnSync(cmd, args, { stdio: "ignore" }).status === 0;

export const espeakAvailable = present("espeak-ng", ["--version"]);
export const soxAvailable = present("sox", ["--version"]);

/** Reads 16-bit PCM WAV bytes (any channel count) into planar floats, and its rate. */
export function readPcm16Wav(bytes: Uint8Array): { sampleRateHz: number; channels: Float32Array[] } {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let at = 12;
  let rate = 0;
  let count = 0;
  while (at + 8 <= bytes.length) {
    const id = String.fromCharCode(...bytes.subarray(at, at + 4));
    let size = view.getUint32(at + 4, true);
    if (id === "fmt ") {
      count = view.getUint16(at + 10, true);
      rate = view.getUint32(at + 12, true);
      if (view.getUint16(at + 22, true) !== 16) throw new Error("readPcm16Wav: expected 16-bit PCM");
    } else if (id === "data") {
      size = Math.min(size, bytes.length - at - 8);
      const frames = Math.floor(size / (2 * count));
      const channels = Array.from({ length: count }, () => new Float32Array(frames));
      for (let i = 0; i < frames; i++) for (let c = 0; c < count; c++) channels[c][i] = view.getInt16(at + 8 + 2 * (i * count + c), true) / 32768;
      return { sampleRateHz: rate, channels };
    }
    at += 8 + size + (size & 1);
  }
  throw new Error("readPcm16Wav: no data chunk");
}

/**
 * Speech from espeak-ng (16-bit mono at its own 22.05 kHz); with `rateHz`, resampled by sox without dither,
 * or with sox's default 16-bit dither when `dither` is set (then sounds fade into ±1 LSB of noise at the
 * edges of pauses instead of straight into digital zero).
 * `voice` is an espeak-ng voice name ("en" by default; "en-us", "en+f3", …).
 */
export function espeakSpeech(
  text: string,
  rateHz?: number,
  options: { voice?: string; dither?: boolean } = {},
): { sampleRateHz: number; samples: Float32Array } {
  const dir = mkdtempSync(join(tmpdir(), "tidemark-espeak-"));
  try {
    const raw = join(dir, "speech.wav");
    const run = spawnSync("espeak-ng", ["-v", options.voice ?? "en", "-s", "150", "-w", raw, text]);
    if (run.status !== 0) throw new Error(`espeak-ng failed: ${run.stderr.toString().trim()}`);
    let path = raw;
    if (rateHz !== undefined) {
      path = join(dir, "resampled.wav");
      const sox = spawnSync("sox", [...(options.dither === true ? [] : ["-D"]), raw, "-b", "16", path, "rate", "-v", String(rateHz)]);
      if (sox.status !== 0) throw new Error(`sox failed: ${sox.stderr.toString().trim()}`);
    }
    const { sampleRateHz, channels } = readPcm16Wav(new Uint8Array(readFileSync(path)));
    return { sampleRateHz, samples: channels[0] };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Which of Debian's ffmpeg lossy encoders are built in (libmp3lame, the native aac). */
export const ffmpegEncoders: { mp3: boolean; aac: boolean } = (() => {
  const run = spawnSync("ffmpeg", ["-hide_banner", "-encoders"], { encoding: "utf8" });
  const list = run.status === 0 ? run.stdout : "";
  return { mp3: /\blibmp3lame\b/.test(list), aac: /^\s*A\S*\s+aac\s/m.test(list) };
})();

/**
 * A lossy round trip through Debian's ffmpeg: mono float samples encoded with `codec` at `bitrate`
 * ("320k"), decoded back to float at the same rate. The decoder's delay is left in (it does not matter
 * to a spectrum).
 */
export function lossyRoundTrip(x: Float32Array, rateHz: number, codec: "libmp3lame" | "aac", bitrate: string): Float32Array {
  const dir = mkdtempSync(join(tmpdir(), "tidemark-lossy-"));
  try {
    const encoded = join(dir, codec === "aac" ? "x.m4a" : "x.mp3");
    const raw = ["-f", "f32le", "-ar", String(rateHz), "-ac", "1"];
    const input = Buffer.from(x.buffer, x.byteOffset, x.byteLength);
    const enc = spawnSync("ffmpeg", ["-hide_banner", "-loglevel", "error", ...raw, "-i", "-", "-c:a", codec, "-b:a", bitrate, encoded], { input });
    if (enc.status !== 0) throw new Error(`ffmpeg ${codec} encode failed: ${enc.stderr.toString().trim()}`);
    const dec = spawnSync("ffmpeg", ["-hide_banner", "-loglevel", "error", "-i", encoded, ...raw, "-"], { maxBuffer: 1 << 28 });
    if (dec.status !== 0) throw new Error(`ffmpeg decode failed: ${dec.stderr.toString().trim()}`);
    const copy = new Uint8Array(dec.stdout.length);
    copy.set(dec.stdout);
    return new Float32Array(copy.buffer, 0, Math.floor(copy.length / 4));
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
