/**
 * The measuring engine of `scan` for a worker: the same analyseFile (through scanTask) on a worker-thread
 * pool, one engine per profile the jobs name. Always on threads, even for one job at a time: the main
 * thread must stay free to send heartbeats and results while a long file is measured (a spectrogram of a
 * long file renders in one go, and a silent worker loses its job). PNGs go to a private temporary folder
 * and are removed once their result is uploaded.
 */
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { validateProfile } from "@tidemark/shared/profiles/parseProfile";
import type { RunProfileDto } from "@tidemark/shared/types/api";
import { loaded, type LoadedProfile } from "../profiles/loadProfile.ts";
import type { ScanContext } from "../scan/analyseFile.ts";
import type { ScanTask, ScanTaskResult } from "../scan/scanTask.ts";
import { createWorkerPool, WORKER_HEAP_LIMIT_MB, type WorkerPool } from "../scan/workerPool.ts";

/** scan's worker script: the TypeScript source, or the bundle's entry (every chunk lands in cli/dist). */
const WORKER_SCRIPT = new URL(import.meta.url.endsWith(".ts") ? "../scan/scanWorker.ts" : "./scanWorker.js", import.meta.url);

export interface ScanEngine {
  profile: LoadedProfile;
  context: ScanContext;
  pool: WorkerPool<ScanTask, ScanTaskResult>;
}

export interface ScanEngines {
  /** The engine for a job's profile; throws when the definition does not hash to the job's hash. */
  forProfile(profile: RunProfileDto): ScanEngine;
  /** Stops every engine now; running tasks reject. */
  terminate(): Promise<void>;
  close(): Promise<void>;
  /** Where this worker's PNGs are written, or null without images. */
  readonly imageDir: string | null;
}

export async function createScanEngines(options: { concurrency: number; images: boolean }): Promise<ScanEngines> {
  const imageDir = options.images ? await mkdtemp(path.join(tmpdir(), "tidemark-worker-")) : null;
  const engines = new Map<string, ScanEngine>();
  return {
    imageDir,
    forProfile(profile) {
      const known = engines.get(profile.hash);
      if (known) return known;
      const checked = loaded(validateProfile(profile.definition, `the run's profile ${profile.name}`));
      if (checked.hash !== profile.hash) throw new Error(`the run's profile ${profile.name} hashes to ${checked.hash}, not ${profile.hash}`);
      // One folder per profile: two engines never write the same PNG path.
      const dirAbs = imageDir ? path.join(imageDir, profile.hash.slice(0, 16)) : null;
      const context: ScanContext = { profile: checked.profile, settings: checked.settings, spectrograms: dirAbs ? { dirAbs, dirShown: "spectrograms" } : null, fingerprint: true, closeups: true };
      const pool = createWorkerPool<ScanTask, ScanTaskResult>({ size: options.concurrency, script: WORKER_SCRIPT, workerData: context, maxOldGenerationSizeMb: WORKER_HEAP_LIMIT_MB });
      const engine = { profile: checked, context, pool };
      engines.set(profile.hash, engine);
      return engine;
    },
    async terminate() {
      await Promise.all([...engines.values()].map((e) => e.pool.terminate()));
    },
    async close() {
      await Promise.all([...engines.values()].map((e) => e.pool.close()));
      if (imageDir) await rm(imageDir, { recursive: true, force: true });
    },
  };
}
