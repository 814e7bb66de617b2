/**
 * In-process timing of each stage of the scan on one file, for profiling work (`npm run bench -- --stages
 * FILE`): the file is decoded once into memory (capped at --seconds), then every analyser part runs over
 * those blocks on its own, several times, and the median CPU time of each is printed as ms and as ×
 * realtime. The real-CLI figures come from bench.ts; this only says where the time goes.
 */
import { createHash } from "node:crypto";
import { readFile } from "node:fs/promises";
import { createBitDepthMeter } from "@tidemark/shared/analysis/bitDepth";
import { createChannelLevelTotals } from "@tidemark/shared/analysis/channelLevels";
import { createClickDetector } from "@tidemark/shared/analysis/clicks";
import { createClipDetector } from "@tidemark/shared/analysis/clipping";
import { createLevelAnalyser } from "@tidemark/shared/analysis/levelAnalyser";
import { createLevelWindows } from "@tidemark/shared/analysis/levelWindows";
import { createLoudnessMeter } from "@tidemark/shared/analysis/loudness";
import { createStereoAnalyser } from "@tidemark/shared/analysis/stereo";
import { createTruePeakMeter } from "@tidemark/shared/analysis/truePeak";
import { createValueRunTracker } from "@tidemark/shared/analysis/valueRuns";
import { createFileAnalysis, imagesOf } from "@tidemark/shared/engine/fileAnalysis";
import { encodeFingerprint } from "@tidemark/shared/fingerprint/codec";
import { createFingerprinter } from "@tidemark/shared/fingerprint/fingerprinter";
import { renderSpectrogramImage } from "@tidemark/shared/render/spectrogramImage";
import { renderWaveformImage } from "@tidemark/shared/render/waveformImage";
import { createSpectralAnalyser } from "@tidemark/shared/spectral/spectralAnalyser";
import { createWaveformAccumulator } from "@tidemark/shared/spectral/waveformEnvelope";
import type { AudioBlock, StreamFormat } from "@tidemark/shared/types/analysis";
import { DEFAULT_ANALYSIS_SETTINGS } from "@tidemark/shared/types/settings";
import { createDataChunkDecoder } from "@tidemark/shared/wav/dataChunkDecoder";
import { byteSourceFromBytes } from "@tidemark/shared/wav/byteSource";
import { readWavLayout } from "@tidemark/shared/wav/wavLayout";
import { encodePng } from "../../cli/src/render/encodePng.ts";
import { installFontTypesetter } from "../../cli/src/render/fontTypesetter.ts";

const cpuMs = (): number => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
};

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : 0.5 * (s[s.length / 2 - 1] + s[s.length / 2]);
}

export async function runStages(file: string, maxSeconds: number, repeats: number, only: string | null): Promise<void> {
  const bytes = new Uint8Array(await readFile(file));
  const layout = await readWavLayout(byteSourceFromBytes(bytes));
  const settings = DEFAULT_ANALYSIS_SETTINGS;
  const frames = Math.min(layout.totalFrames, Math.round(maxSeconds * layout.sampleRateHz));
  const format: StreamFormat = { sampleRateHz: layout.sampleRateHz, channels: layout.channels, bitDepth: layout.bitDepth, encoding: layout.encoding, totalFrames: frames };
  const seconds = frames / layout.sampleRateHz;
  const dataBytes = bytes.subarray(0, layout.dataOffset + frames * layout.blockAlign);
  // Blocks are decoded afresh for every stage run, so each stage sees them cache-warm as in a scan;
  // the decode-only time is then subtracted.
  const decodeInto = (onBlock: (b: AudioBlock) => void) => {
    const d = createDataChunkDecoder({ ...layout, totalFrames: frames }, 65536, onBlock);
    for (let at = 0; at < dataBytes.length; at += 4 << 20) d.push(dataBytes.subarray(at, at + (4 << 20)), at);
    d.finish();
  };
  const feed = (push: (input: Float32Array[], n: number) => void) => decodeInto((b) => push(b.channels, b.frames));
  const feedBlocks = (push: (b: AudioBlock) => void) => decodeInto(push);
  const stages: Record<string, () => void> = {
    hash: () => void createHash("sha256").update(dataBytes).digest(),
    decode: () => decodeInto(() => undefined),
    valueRuns: () => {
      const r = createValueRunTracker(format.channels, 16, () => undefined);
      feed((x, n) => r.push(x, n));
      r.finish();
    },
    clipping: () => {
      const c = createClipDetector(format, settings, () => undefined);
      feed((x, n) => c.push(x, n));
      c.finish();
    },
    clicks: () => {
      const c = createClickDetector(format.sampleRateHz, format.channels, settings);
      feed((x, n) => c.push(x, n));
      c.finish();
    },
    bitDepth: () => {
      const m = createBitDepthMeter(format);
      feed((x, n) => m.push(x, n));
    },
    stereoPush: () => {
      const s = createStereoAnalyser(format.sampleRateHz, settings);
      feed((x, n) => s.push(x, n));
    },
    loudness: () => {
      const l = createLoudnessMeter(format.sampleRateHz, format.channels);
      feed((x, n) => l.push(x, n));
      l.finish();
    },
    truePeak: () => {
      const t = createTruePeakMeter(format.sampleRateHz, format.channels);
      feed((x, n) => t.push(x, n));
      t.finish();
    },
    levelWindows: () => {
      const totals = createChannelLevelTotals(format.channels);
      const w = createLevelWindows(format.sampleRateHz, format.channels, (win) => totals.add(win));
      feed((x, n) => w.push(x, n));
      w.finish();
    },
    levelAll: () => {
      const a = createLevelAnalyser(format, settings);
      feedBlocks((b) => a.push(b));
      a.finish();
    },
    waveform: () => {
      const w = createWaveformAccumulator({ columns: 1536, totalFrames: frames, sampleRateHz: format.sampleRateHz });
      feedBlocks((b) => w.push(b));
      w.finish();
    },
    spectralAll: () => {
      const s = createSpectralAnalyser(format, settings);
      feedBlocks((b) => s.push(b));
      s.finish();
    },
    fingerprint: () => {
      const f = createFingerprinter(format);
      feedBlocks((b) => f.push(b));
      encodeFingerprint(f.finish());
    },
    render: () => {
      installFontTypesetter();
      const a = createFileAnalysis(format, settings);
      feedBlocks((b) => a.push(b));
      const r = a.finish();
      const t = cpuMs();
      const { width, height } = settings.spectrogram;
      const spectrogram = renderSpectrogramImage(imagesOf(r).spectrogram, { width, height, markers: [], title: `bench-${renderMs.length}.wav` });
      const waveform = renderWaveformImage(imagesOf(r).waveform, { width, height: 120, markers: [] });
      const painted = cpuMs();
      encodePng(spectrogram);
      encodePng(waveform);
      paintMs.push(painted - t);
      renderMs.push(cpuMs() - t);
    },
  };
  const renderMs: number[] = [];
  const paintMs: number[] = [];
  const unknown = only?.split(",").filter((name) => !(name in stages)) ?? [];
  if (unknown.length > 0) throw new Error(`--only with --stages takes ${Object.keys(stages).join(", ")}; got ${unknown.join(", ")}`);
  let decodeMs = 0;
  console.log(`${file}: ${seconds.toFixed(0)} s of ${format.channels} ch ${format.bitDepth}-bit ${format.sampleRateHz} Hz, ${repeats} runs, median CPU ms (decode subtracted)`);
  for (const [name, run] of Object.entries(stages)) {
    if (only && !only.split(",").includes(name)) continue;
    const times: number[] = [];
    for (let r = 0; r < repeats; r++) {
      const t = cpuMs();
      run();
      times.push(cpuMs() - t);
    }
    let ms = name === "render" ? median(renderMs) : median(times);
    if (name === "decode") decodeMs = ms;
    else if (name !== "hash" && name !== "render") ms -= decodeMs;
    console.log(`${name.padEnd(14)} ${ms.toFixed(1).padStart(8)} ms ${(seconds / (ms / 1000)).toFixed(0).padStart(8)}x`);
    if (name === "render") {
      // Both images of the scan: painting (grid, axes, text) and then PNG encoding.
      const paint = median(paintMs);
      console.log(`  paint        ${paint.toFixed(1).padStart(8)} ms`);
      console.log(`  png          ${(ms - paint).toFixed(1).padStart(8)} ms`);
    }
  }
}
