/**
 * Issue #17: encodings Tidemark does not decode keep a clear `unsupported-encoding` error that names the format
 * tag (or the AIFF-C compression type), on files the way archives receive them: written by Debian's sox (GSM
 * 6.10) and ffmpeg (IMA and Microsoft ADPCM, MP3 inside WAV, IMA4 in AIFF-C). The tags are those the tools
 * write (Microsoft's registered WAVE format tags, from memory: 0x0002 MS ADPCM, 0x0011 IMA ADPCM, 0x0031 GSM
 * 6.10, 0x0055 MPEG Layer 3); each file is first checked to be what the tool says (`sox --i`, ffprobe).
 */
import { execFileSync, spawnSync } from "node:child_process";
import { beforeAll, describe, expect, it } from "vitest";
import { scanFolder } from "../helpers/scanFolder.ts";

const tools = spawnSync("sox", ["--version"], { stdio: "ignore" }).status === 0 && spawnSync("ffmpeg", ["-version"], { stdio: "ignore" }).status === 0;
const hasLame = tools && /libmp3lame/.test(spawnSync("ffmpeg", ["-hide_banner", "-encoders"], { encoding: "utf8" }).stdout ?? "");

const { file, scan } = scanFolder("unsupported");
beforeAll(() => {
  if (tools) execFileSync("sox", ["-n", "-r", "8000", "-b", "16", "-c", "1", file("src.wav"), "synth", "1", "sine", "440"]);
});

const ffmpeg = (codec: string, out: string, format?: string): void => {
  execFileSync("ffmpeg", ["-loglevel", "error", "-y", "-i", file("src.wav"), "-c:a", codec, ...(format ? ["-f", format] : []), file(out)]);
};
const probedCodec = (name: string): string =>
  execFileSync("ffprobe", ["-v", "error", "-select_streams", "a:0", "-show_entries", "stream=codec_name", "-of", "csv=p=0", file(name)], { encoding: "utf8" }).trim();

describe.runIf(tools)("still-unsupported encodings name what they are", () => {
  const cases: [string, () => void, string, RegExp][] = [
    ["gsm.wav", () => execFileSync("sox", [file("src.wav"), "-e", "gsm-full-rate", file("gsm.wav")]), "gsm_ms", /format tag 0x0031 \(GSM 6\.10\) is not supported/],
    ["ima.wav", () => ffmpeg("adpcm_ima_wav", "ima.wav"), "adpcm_ima_wav", /format tag 0x0011 \(IMA ADPCM\) is not supported/],
    ["msadpcm.wav", () => ffmpeg("adpcm_ms", "msadpcm.wav"), "adpcm_ms", /format tag 0x0002 \(Microsoft ADPCM\) is not supported/],
    ["ima4.aifc", () => ffmpeg("adpcm_ima_qt", "ima4.aifc", "aiff"), "adpcm_ima_qt", /AIFF-C compression type "ima4" is not supported/],
  ];
  it.each(cases)("%s → unsupported-encoding, naming it", async (name, make, codec, message) => {
    make();
    expect(probedCodec(name)).toBe(codec);
    const report = await scan(name);
    expect(report.verdict).toBe("error");
    expect(report.error?.code).toBe("unsupported-encoding");
    expect(report.error?.message).toMatch(message);
  });

  it.runIf(hasLame)("MP3 inside WAV (ffmpeg -c:a libmp3lame -f wav) → unsupported-encoding, naming tag 0x0055", async () => {
    ffmpeg("libmp3lame", "mp3.wav", "wav");
    expect(probedCodec("mp3.wav")).toBe("mp3");
    const report = await scan("mp3.wav");
    expect(report.error?.code).toBe("unsupported-encoding");
    expect(report.error?.message).toMatch(/format tag 0x0055 \(MPEG Layer 3\) is not supported/);
  });
});
