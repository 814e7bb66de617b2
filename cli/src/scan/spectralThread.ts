/**
 * Thread entry of the spectral side (shared/src/engine/spectralSide.ts) of one file's pass: reads the
 * blocks the reading thread puts into the shared ring (blockRing.ts), then posts the side's result.
 * Started by spectralThreadClient.ts, which says why and when.
 */
import { parentPort, workerData } from "node:worker_threads";
import { createSpectralSide, type SpectralSideResult } from "@tidemark/shared/engine/spectralSide";
import type { StreamFormat } from "@tidemark/shared/types/analysis";
import type { AnalysisSettings } from "@tidemark/shared/types/settings";
import { oneLine } from "../errors.ts";
import { consumeBlockRing, failBlockRing, type BlockRingMemory } from "./blockRing.ts";

export interface SpectralThreadData {
  ring: BlockRingMemory;
  format: StreamFormat;
  settings: AnalysisSettings;
  fingerprint: boolean;
}

export type SpectralThreadReply = { ok: true; result: SpectralSideResult } | { ok: false; message: string } | { ok: false; aborted: true };

const data = workerData as SpectralThreadData;
let reply: SpectralThreadReply;
try {
  const side = createSpectralSide(data.format, data.settings, { clock: () => performance.now(), fingerprint: data.fingerprint });
  const complete = consumeBlockRing(data.ring, (block) => side.push(block));
  reply = complete ? { ok: true, result: side.finish() } : { ok: false, aborted: true };
} catch (error) {
  // Also when the side could not be set up: the reading thread must stop waiting for this one.
  failBlockRing(data.ring);
  reply = { ok: false, message: error instanceof Error ? error.message : oneLine(error) };
}
parentPort?.postMessage(reply);
