/**
 * Bench section `longflac` (issues #17 and #22): FLAC files of 1×, 4× and 16× a base length (15 min, so 16× is
 * the 4-hour FLAC), scanned with one worker: peak RSS against the 150 MB target and the in-file time per audio
 * second (linear in length when the 16× figure stays within the linearity target of the 1× one). Each input
 * is the bench's pink noise piped as raw PCM straight into Debian's `flac` (no WAV on disk) and deleted after
 * its scan, so the disk holds one FLAC at a time (≈ 3.7 GB for 4 hours).
 */
import { spawn } from "node:child_process";
import { mkdir, rm, stat, statfs } from "node:fs/promises";
import path from "node:path";
import { synthesisePcm } from "./synthWav.ts";

export interface LongFlacScan {
  wallSeconds: number;
  cpuSeconds: number;
  peakRssMb: number;
  otherCores: number;
  stagesMs: Record<string, number>;
}

export interface LongFlacRow {
  factor: number;
  audioSeconds: number;
  flacBytes: number;
  wallSeconds: number;
  cpuSeconds: number;
  peakRssMb: number;
  otherCores: number;
  /** read + decode + hash + analyse + render, per audio second (start-up excluded, as in section 4). */
  inFileMsPerAudioSecond: number;
}

export interface LongFlacResult {
  baseSeconds: number;
  rows: LongFlacRow[];
  /** In-file time per audio second at 4× and 16× over 1×. */
  ratio4: number;
  ratio16: number;
  peakRssMb: number;
}

export const LONG_FLAC_BASE_SECONDS = 900;
export const LONG_FLAC_FACTORS = [1, 4, 16];
const SAMPLE_RATE_HZ = 48000;
const CHANNELS = 2;
/** flac -5 on this pink noise keeps ≈ 88 % of the PCM (measured: 152 MB for 173 MB). */
const FLAC_BYTES_PER_SECOND = 0.9 * SAMPLE_RATE_HZ * CHANNELS * 3;

/** Pink noise (the bench's synthesiser, repeating every 60 s) encoded by `flac -5` from a pipe. */
export async function encodeSynthFlac(file: string, seconds: number, seed: number): Promise<number> {
  const args = ["-s", "-f", "-5", "--force-raw-format", "--endian=little", "--sign=signed", `--channels=${CHANNELS}`, "--bps=24", `--sample-rate=${SAMPLE_RATE_HZ}`, "-o", file, "-"];
  const child = spawn("flac", args, { stdio: ["pipe", "ignore", "pipe"] });
  let stderr = "";
  child.stderr.setEncoding("utf8");
  child.stderr.on("data", (d: string) => void (stderr = (stderr + d).slice(-4000)));
  const exited = new Promise<number>((resolve, reject) => {
    child.on("error", reject);
    child.on("close", (code) => resolve(code ?? -1));
  });
  const stdin = child.stdin;
  await synthesisePcm({ seconds, sampleRateHz: SAMPLE_RATE_HZ, channels: CHANNELS, bitDepth: 24, noise: "pink", rmsDbfs: -20, seed, periodSeconds: 60 }, (bytes) =>
    new Promise<void>((resolve, reject) => {
      // write() may keep the chunk until it is flushed: give it a copy, since the synthesiser reuses its buffer.
      stdin.write(Buffer.from(bytes), (error) => (error ? reject(error) : resolve()));
    }),
  );
  stdin.end();
  const code = await exited;
  if (code !== 0) throw new Error(`flac exited with ${code} encoding ${file}: ${stderr}`);
  return (await stat(file)).size;
}

export async function runLongFlac(
  root: string,
  scan: (dir: string) => Promise<LongFlacScan>,
  log: (line: string) => void,
  baseSeconds = LONG_FLAC_BASE_SECONDS,
): Promise<LongFlacResult | null> {
  const longest = baseSeconds * Math.max(...LONG_FLAC_FACTORS);
  const fs = await statfs(root);
  const need = longest * FLAC_BYTES_PER_SECOND + 2e9;
  if (fs.bavail * fs.bsize < need) {
    log(`  not enough room for a ${(longest / 3600).toFixed(1)} h FLAC (≈ ${(need / 1e9).toFixed(1)} GB with margin): skipping`);
    return null;
  }
  const rows: LongFlacRow[] = [];
  for (const factor of LONG_FLAC_FACTORS) {
    const seconds = baseSeconds * factor;
    const dir = path.join(root, `longflac-${factor}`);
    await mkdir(dir, { recursive: true });
    try {
      const t = performance.now();
      const flacBytes = await encodeSynthFlac(path.join(dir, "long.flac"), seconds, 70 + factor);
      log(`  encoded ${seconds} s (${(seconds / 3600).toFixed(2)} h) as FLAC, ${(flacBytes / 1e9).toFixed(2)} GB, in ${((performance.now() - t) / 1000).toFixed(0)} s`);
      const s = await scan(dir);
      const st = s.stagesMs;
      const inFileMs = (st.read ?? 0) + (st.decode ?? 0) + (st.hash ?? 0) + (st.analyse ?? 0) + (st.render ?? 0);
      rows.push({ factor, audioSeconds: seconds, flacBytes, wallSeconds: s.wallSeconds, cpuSeconds: s.cpuSeconds, peakRssMb: s.peakRssMb, otherCores: s.otherCores, inFileMsPerAudioSecond: inFileMs / seconds });
      log(`  ${seconds} s FLAC: ${s.wallSeconds.toFixed(1)} s wall, ${s.cpuSeconds.toFixed(1)} s CPU, ${s.peakRssMb.toFixed(0)} MB peak RSS, ${(inFileMs / seconds).toFixed(2)} ms per audio s, others ${s.otherCores.toFixed(2)} cores`);
    } finally {
      await rm(dir, { recursive: true, force: true });
    }
  }
  const per = (f: number) => rows.find((r) => r.factor === f)?.inFileMsPerAudioSecond ?? NaN;
  return { baseSeconds, rows, ratio4: per(4) / per(1), ratio16: per(16) / per(1), peakRssMb: Math.max(...rows.map((r) => r.peakRssMb)) };
}
