/**
 * One file's pass on two threads: the reading thread keeps the level side (levels, loudness, true peak,
 * close-up capture) and a second thread runs the spectral side (spectrogram, bands, fingerprint) on
 * copies of the same blocks, passed through a shared ring (blockRing.ts). Worth it when a core would
 * otherwise idle: a scan with fewer files than workers (runScan.ts sets ScanContext.spectralThread).
 * The same analysers see the same samples in the same order, so the merged result is the one-thread result
 * to the bit (tests/cli/spectralThread.test.ts).
 */
import { Worker } from "node:worker_threads";
import type { SpectralSideResult } from "@tidemark/shared/engine/spectralSide";
import type { AudioBlock, StreamFormat } from "@tidemark/shared/types/analysis";
import type { AnalysisSettings } from "@tidemark/shared/types/settings";
import { allocateBlockRing, createBlockRingWriter, DEFAULT_RING_SLOTS, RING_FAILED, RING_STATE_INDEX } from "./blockRing.ts";
import type { SpectralThreadData, SpectralThreadReply } from "./spectralThread.ts";

/** Running from the prebuilt bundle in cli/dist rather than the TypeScript sources (as in runScan.ts). */
const IS_BUNDLED = !import.meta.url.endsWith(".ts");
const SCRIPT = new URL(IS_BUNDLED ? "./spectralThread.js" : "./spectralThread.ts", import.meta.url);
/** The spectral side holds grids and fingerprint hashes, far below this; it stops a runaway. */
const HEAP_LIMIT_MB = 1024;

export interface SpectralThread {
  /** Copies the block for the other thread (waiting while the ring is full). */
  push(block: AudioBlock): void;
  /** After the last block: tells the thread so at once and resolves to the spectral side's result. */
  finish(): Promise<SpectralSideResult>;
  /** The pass stopped: release and stop the thread. */
  abort(): void;
}

/**
 * CommonJS run with `eval: true`: tsx for the sources (as workerPool.ts does), then the script. A script
 * that cannot load marks the ring failed, so the reading thread stops waiting for it.
 */
function bootstrapCode(script: URL): string {
  const tsx = script.pathname.endsWith(".ts") ? `.then(() => import(${JSON.stringify(import.meta.resolve("tsx/esm/api"))})).then((tsx) => tsx.register())` : "";
  return [
    `const { workerData } = require("node:worker_threads");`,
    `Promise.resolve()${tsx}.then(() => import(${JSON.stringify(script.href)})).catch((error) => {`,
    `  const control = new Int32Array(workerData.ring.control);`,
    `  Atomics.store(control, ${RING_STATE_INDEX}, ${RING_FAILED});`,
    `  Atomics.notify(control, 1);`,
    `  throw error;`,
    `});`,
  ].join("\n");
}

export function startSpectralThread(format: StreamFormat, settings: AnalysisSettings, o: { fingerprint: boolean; slotFrames: number }): SpectralThread {
  const ring = allocateBlockRing({ channels: format.channels, slotFrames: o.slotFrames, slots: DEFAULT_RING_SLOTS });
  const writer = createBlockRingWriter(ring);
  const data: SpectralThreadData = { ring, format, settings, fingerprint: o.fingerprint };
  const worker = new Worker(bootstrapCode(SCRIPT), { eval: true, workerData: data, resourceLimits: { maxOldGenerationSizeMb: HEAP_LIMIT_MB } });
  const result = new Promise<SpectralSideResult>((resolve, reject) => {
    worker.once("message", (reply: SpectralThreadReply) => {
      if (reply.ok) resolve(reply.result);
      else reject(new Error("aborted" in reply ? "spectral thread: the pass was stopped" : `spectral thread: ${reply.message}`));
    });
    worker.once("error", (error) => reject(new Error(`spectral thread failed: ${error instanceof Error ? error.message : String(error)}`)));
    worker.once("exit", (code) => reject(new Error(`spectral thread exited with code ${code} before its result`)));
  });
  // Settled on every path (abort included) even when nobody awaits it.
  result.catch(() => undefined);
  return {
    push(block) {
      writer.push(block);
    },
    finish() {
      // Ended at once, not at the first await: the other thread starts finishing while the caller does.
      writer.end();
      return result.finally(() => void worker.terminate());
    },
    abort() {
      writer.abort();
      void worker.terminate();
    },
  };
}
