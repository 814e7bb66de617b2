/**
 * Thread entry of the spectral side (shared/src/engine/spectralSide.ts) of one file's pass: reads the
 * blocks the reading thread puts into the shared ring (blockRing.ts), then posts the side's result. It
 * then paints and encodes the file's spectrogram PNGs if asked (the markers come from the judged
 * findings, known only later), while the reading thread draws the rest. Started by
 * spectralThreadClient.ts, which says why and when.
 */
import { parentPort, workerData } from "node:worker_threads";
import { createSpectralSide, type SpectralSideResult } from "@tidemark/shared/engine/spectralSide";
import { renderSpectrogramImage } from "@tidemark/shared/render/spectrogramImage";
import type { StreamFormat } from "@tidemark/shared/types/analysis";
import type { Finding } from "@tidemark/shared/types/report";
import type { AnalysisSettings } from "@tidemark/shared/types/settings";
import { oneLine } from "../errors.ts";
import { encodePng } from "../render/encodePng.ts";
import { consumeBlockRing, failBlockRing, type BlockRingMemory } from "./blockRing.ts";
import { readThreadClock } from "./threadClock.ts";

export interface SpectralThreadData {
  ring: BlockRingMemory;
  format: StreamFormat;
  settings: AnalysisSettings;
  fingerprint: boolean;
  /** The spectrograms will be asked for: the typesetter is loaded while the reading thread finishes its side. */
  images: boolean;
}

export type SpectralThreadReply = { ok: true; result: SpectralSideResult; threadCpuMs: number } | { ok: false; message: string } | { ok: false; aborted: true };

/** The overview spectrogram (channel null) and the per-channel ones, drawn as renderSpectrogramImage does in one thread. */
export interface SpectrogramRenderRequest {
  images: { channel: number | null; title: string }[];
  width: number;
  height: number;
  markers: Finding[];
}

export type SpectrogramRenderReply = { ok: true; pngs: Uint8Array[]; paintMs: number; pngMs: number; threadCpuMs: number } | { ok: false; message: string };

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
parentPort?.postMessage(reply);

if (reply.ok) {
  const { spectrogram, channelSpectrograms } = reply.result.spectral;
  const typesetter = data.images ? import("../render/fontTypesetter.ts").then((m) => m.installFontTypesetter()) : null;
  typesetter?.catch(() => undefined);
  // One request at most; the reading thread closes this thread when it has no use for it.
  parentPort?.once("message", (request: SpectrogramRenderRequest) => {
    void renderSpectrograms(request).then((answer) => parentPort?.postMessage(answer, answer.ok ? answer.pngs.map((p) => p.buffer as ArrayBuffer) : []));
  });

  async function renderSpectrograms(request: SpectrogramRenderRequest): Promise<SpectrogramRenderReply> {
    try {
      await (typesetter ?? import("../render/fontTypesetter.ts").then((m) => m.installFontTypesetter()));
      let paintMs = 0;
      let pngMs = 0;
      const pngs = request.images.map(({ channel, title }) => {
        const grid = channel === null ? spectrogram : channelSpectrograms?.[channel];
        if (!grid) throw new Error(`no spectrogram for channel ${channel}`);
        const t0 = performance.now();
        const image = renderSpectrogramImage(grid, { width: request.width, height: request.height, markers: request.markers, title });
        const t1 = performance.now();
        const bytes = encodePng(image);
        paintMs += t1 - t0;
        pngMs += performance.now() - t1;
        return new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength).slice();
      });
      return { ok: true, pngs, paintMs, pngMs, threadCpuMs: readThreadClock().cpuMs };
    } catch (error) {
      return { ok: false, message: oneLine(error) };
    }
  }
}
