/**
 * Thread entry of the second thread on one file's pass: reads the blocks the reading thread puts into the
 * shared ring (blockRing.ts), runs its part of the analysis on them, posts the result and ends. Its part is
 * the spectral side (shared/src/engine/spectralSide.ts), or the whole analysis when decoding keeps the
 * reading thread busy (FLAC). Started by spectralThreadClient.ts, which says why and when.
 *
 * Kept lean on purpose (issue #22): this thread imports only the analysis and the ring, and draws
 * nothing. Drawing here would load a second typesetter (Skia and the fonts in this isolate: ≈ 10 MB) and
 * keep the isolate alive into the reading thread's image phase, where a scan's memory peaks.
 */
import { parentPort, workerData } from "node:worker_threads";
import { createFileAnalysis, type FileAnalysisResult } from "@tidemark/shared/engine/fileAnalysis";
import { createSpectralSide, type SpectralSideResult } from "@tidemark/shared/engine/spectralSide";
import type { AudioBlock, BlockAnalyser, StreamFormat } from "@tidemark/shared/types/analysis";
import type { AnalysisSettings } from "@tidemark/shared/types/settings";
import { oneLine } from "../errors.ts";
import { consumeBlockRing, failBlockRing, type BlockRingMemory } from "./blockRing.ts";
import { rankerFor, type SeverityOverrides } from "./closeupRank.ts";
import { ownedBuffers } from "./ownedBuffers.ts";
import { readThreadClock } from "./threadClock.ts";

/** What the second thread measures: the spectral side, or everything (the reading thread then only reads and decodes). */
export type SecondThreadPart = { kind: "spectral" } | { kind: "all"; closeups: { severities: SeverityOverrides } | null };

export interface SpectralThreadData {
  ring: BlockRingMemory;
  format: StreamFormat;
  settings: AnalysisSettings;
  fingerprint: boolean;
  /** Build the spectrogram grids and waveform envelope (only a scan that draws images needs them). */
  images: boolean;
  part: SecondThreadPart;
}

export type SecondThreadResult = { kind: "spectral"; result: SpectralSideResult } | { kind: "all"; result: FileAnalysisResult };

export type SpectralThreadReply = ({ ok: true; threadCpuMs: number } & SecondThreadResult) | { ok: false; message: string } | { ok: false; aborted: true };

const data = workerData as SpectralThreadData;
const clock = (): number => performance.now();
let reply: SpectralThreadReply;
try {
  const part = data.part;
  let finish: () => SecondThreadResult;
  let analyser: BlockAnalyser<unknown>;
  if (part.kind === "all") {
    const all = createFileAnalysis(data.format, data.settings, { clock, fingerprint: data.fingerprint, images: data.images, closeups: part.closeups ? { rankOf: rankerFor(part.closeups.severities) } : null });
    analyser = all;
    finish = () => ({ kind: "all", result: all.finish() });
  } else {
    const side = createSpectralSide(data.format, data.settings, { clock, fingerprint: data.fingerprint, images: data.images });
    analyser = side;
    finish = () => ({ kind: "spectral", result: side.finish() });
  }
  const complete = consumeBlockRing(data.ring, (block: AudioBlock) => analyser.push(block));
  reply = complete ? { ok: true, ...finish(), threadCpuMs: readThreadClock().cpuMs } : { ok: false, aborted: true };
} catch (error) {
  // Also when the analysis could not be set up: the reading thread must stop waiting for this one.
  failBlockRing(data.ring);
  reply = { ok: false, message: error instanceof Error ? error.message : oneLine(error) };
}
// The grids and samples move rather than being copied: this thread has no further use for them.
parentPort?.postMessage(reply, reply.ok ? ownedBuffers(reply.result) : []);
