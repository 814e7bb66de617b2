/**
 * One file's pass on two threads: the reading thread keeps the level side (levels, loudness, true peak,
 * close-up capture) and a second thread runs the spectral side (spectrogram, bands, fingerprint) on
 * copies of the same blocks, passed through a shared ring (blockRing.ts). When decoding alone takes about
 * as long as either side (FLAC), the second thread runs both sides and the reading thread only reads and
 * decodes (part "all"). Worth it when a core would otherwise idle: runScan.ts decides
 * (spectralThreadRule.ts). The same analysers see the same samples in the same order, so the result is the
 * one-thread result to the bit (tests/cli/spectralThread.test.ts).
 *
 * Memory (issue #22: a long file's scan stays within 150 MB): the thread ends as soon as its result is
 * posted, before the reading thread draws the images (where a scan peaks), its result's arrays are moved
 * rather than copied, and its young generation is held small as the scan workers' is.
 */
import type { AudioBlock, StreamFormat } from "@tidemark/shared/types/analysis";
import type { AnalysisSettings } from "@tidemark/shared/types/settings";
import { allocateBlockRing, createBlockRingWriter, RING_FAILED, RING_STATE_INDEX, ringSlotsFor, type BlockRingWriter } from "./blockRing.ts";
import type { SecondThreadPart, SecondThreadResult, SpectralThreadData, SpectralThreadReply } from "./spectralThread.ts";
import { WORKER_HEAP_LIMIT_MB } from "./workerPool.ts";
import { workerThreads } from "./lazyWorkerThreads.ts";


/**
 * The thread's young generation, MB: the scan workers' (workerPool.ts's callers), which bounds the garbage
 * an isolate may hold between scavenges. On the 600 s file, 4 MB, 8 MB and V8's default measured alike in
 * the thread's CPU time and the scan's peak RSS (3 runs each, 5 December 2026).
 */
const SPECTRAL_THREAD_YOUNG_GENERATION_MB = 8;

/** Running from the prebuilt bundle in cli/dist rather than the TypeScript sources (as in runScan.ts). */
const IS_BUNDLED = !import.meta.url.endsWith(".ts");
const SCRIPT = new URL(IS_BUNDLED ? "./spectralThread.js" : "./spectralThread.ts", import.meta.url);

export interface SpectralThread {
  /** Copies the block for the other thread (waiting while the ring is full). */
  push(block: AudioBlock): void;
  /**
   * After the last block: tells the thread so at once and resolves to the spectral side's result (and the
   * thread's time on a core); the thread then ends and the ring is let go.
   */
  finish(): Promise<SecondThreadResult & { threadCpuMs: number }>;
  /** After the ring reported the thread failed: its error (or one saying it stopped answering within waitMs). */
  failure(waitMs: number): Promise<Error>;
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

export function startSpectralThread(format: StreamFormat, settings: AnalysisSettings, o: { fingerprint: boolean; images: boolean; slotFrames: number; part: SecondThreadPart }): SpectralThread {
  const ring = allocateBlockRing({ channels: format.channels, slotFrames: o.slotFrames, slots: ringSlotsFor(format.channels, o.slotFrames, o.part.kind === "all") });
  // Dropped after the last block, so the ring's memory goes as soon as the thread has ended too.
  let writer: BlockRingWriter | null = createBlockRingWriter(ring);
  const data: SpectralThreadData = { ring, format, settings, fingerprint: o.fingerprint, images: o.images, part: o.part };
  const worker = new (workerThreads().Worker)(bootstrapCode(SCRIPT), {
    eval: true,
    workerData: data,
    resourceLimits: { maxOldGenerationSizeMb: WORKER_HEAP_LIMIT_MB, maxYoungGenerationSizeMb: SPECTRAL_THREAD_YOUNG_GENERATION_MB },
  });
  const result = new Promise<SecondThreadResult & { threadCpuMs: number }>((resolve, reject) => {
    worker.once("message", (reply: SpectralThreadReply) => {
      if (reply.ok) resolve(reply);
      // The analyser's own message, as the one-thread pass would report it.
      else reject(new Error("aborted" in reply ? "spectral thread: the pass was stopped" : reply.message));
    });
    worker.once("error", (error) => reject(new Error(`spectral thread failed: ${error instanceof Error ? error.message : String(error)}`)));
    worker.once("exit", (code) => reject(new Error(`spectral thread exited with code ${code} before its result`)));
  });
  // Settled on every path (abort included) even when nobody awaits it.
  result.catch(() => undefined);
  return {
    push(block) {
      if (!writer) throw new Error("spectral thread: a block after the last one");
      writer.push(block);
    },
    finish() {
      // Ended at once, not at the first await: the other thread starts finishing while the caller does.
      writer?.end();
      writer = null;
      // It ends by itself once the result is posted; the result is handed on only once it has (terminate()
      // makes sure of it), so its isolate is gone before the caller draws the images, where memory peaks.
      return result.then(
        async (r) => {
          await worker.terminate();
          return r;
        },
        async (error: unknown) => {
          await worker.terminate();
          throw error;
        },
      );
    },
    failure(waitMs) {
      const timer = new Promise<Error>((resolve) => setTimeout(() => resolve(new Error("spectral thread: stopped answering")), waitMs).unref());
      return Promise.race([result.then(() => new Error("spectral thread: finished after the pass had failed"), (reason: unknown) => (reason instanceof Error ? reason : new Error(String(reason)))), timer]);
    },
    abort() {
      writer?.abort();
      writer = null;
      void worker.terminate();
    },
  };
}
