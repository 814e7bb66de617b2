/**
 * Thread entry of the spectral side (shared/src/engine/spectralSide.ts) of one file's pass: reads the
 * blocks the reading thread puts into the shared ring (blockRing.ts), posts the side's result and ends.
 * Started by spectralThreadClient.ts, which says why and when.
 *
 * Kept lean on purpose (issue #22): this thread imports only the spectral side and the ring, and draws
 * nothing. Drawing here would load a second typesetter (Skia and the fonts in this isolate: ≈ 10 MB) and
 * keep the isolate alive into the reading thread's image phase, where a scan's memory peaks.
 */
import { parentPort, workerData } from "node:worker_threads";
import { createSpectralSide, type SpectralSideResult } from "@tidemark/shared/engine/spectralSide";
import type { StreamFormat } from "@tidemark/shared/types/analysis";
import type { AnalysisSettings } from "@tidemark/shared/types/settings";
import { oneLine } from "../errors.ts";
import { consumeBlockRing, failBlockRing, type BlockRingMemory } from "./blockRing.ts";
import { ownedBuffers } from "./ownedBuffers.ts";
import { readThreadClock } from "./threadClock.ts";

export interface SpectralThreadData {
  ring: BlockRingMemory;
  format: StreamFormat;
  settings: AnalysisSettings;
  fingerprint: boolean;
}

export type SpectralThreadReply = { ok: true; result: SpectralSideResult; threadCpuMs: number } | { ok: false; message: string } | { ok: false; aborted: true };

const data = workerData as SpectralThreadData;
let reply: SpectralThreadReply;
try {
  const side = createSpectralSide(data.format, data.settings, { clock: () => performance.now(), fingerprint: data.fingerprint });
  const complete = consumeBlockRing(data.ring, (block) => side.push(block));
  reply = complete ? { ok: true, result: side.finish(), threadCpuMs: readThreadClock().cpuMs } : { ok: false, aborted: true };
} catch (error) {
  // Also when the side could not be set up: the reading thread must stop waiting for this one.
  failBlockRing(data.ring);
  reply = { ok: false, message: error instanceof Error ? error.message : oneLine(error) };
}
// The grids move rather than being copied: this thread has no further use for them.
parentPort?.postMessage(reply, reply.ok ? ownedBuffers(reply.result) : []);
