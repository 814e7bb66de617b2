/**
 * A fixed pool of worker threads. A task marked `small` may also be sent to a busy worker (up to
 * `queueDepth` tasks a worker), so a worker going through many short files finds the next one already there
 * instead of idling while the main thread answers its last result; the worker may run two small tasks at
 * once (scanWorker.ts). Other tasks go only to an idle worker, and run alone.
 *
 * A TypeScript script (.ts) runs through tsx: each worker starts from a tiny bootstrap that registers tsx's
 * loader and then imports the script (on Node 20, `--import tsx` in a Worker's execArgv does not reach the
 * worker's module loader); a JavaScript one (the prebuilt bundle) is imported as it is. A worker that dies
 * with one task fails that task with WorkerCrashError and is replaced; one that dies holding several
 * (small) tasks has each tried again alone, so only the task that kills a worker fails. A worker that
 * cannot even start fails every task with the reason, instead of being respawned for ever.
 */
import type { Worker as WorkerThread } from "node:worker_threads";
import { workerThreads } from "./lazyWorkerThreads.ts";


export class WorkerCrashError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "WorkerCrashError";
  }
}

/** A worker died before its script loaded (broken install, syntax error): no task can run. */
export class WorkerStartError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "WorkerStartError";
  }
}

export interface WorkerPool<Task, Result> {
  readonly size: number;
  /**
   * Runs the task on the next free worker (queued while all are busy); `onProgress` gets the bytes read so
   * far. A `small` task may be handed to a busy worker, behind its current one.
   */
  run(task: Task, onProgress?: (bytesRead: number) => void, small?: boolean): Promise<Result>;
  /** Waits for running tasks, then stops the workers; queued tasks are rejected. */
  close(): Promise<void>;
  /** Stops the workers now; running and queued tasks are rejected. */
  terminate(): Promise<void>;
}

/** Per-worker V8 heap cap for scan's and the queue worker's pools: far above what one file needs (#8), low enough to stop a runaway. */
export const WORKER_HEAP_LIMIT_MB = 1024;

export interface WorkerPoolOptions {
  size: number;
  script: URL;
  workerData?: unknown;
  /** Old-space limit per worker, so one hostile file cannot take the machine's memory. */
  maxOldGenerationSizeMb?: number;
  /** Young-generation size per worker (V8's default when absent). */
  maxYoungGenerationSizeMb?: number;
  /** Most tasks a worker holds at once, the running one included (default 1); only `small` tasks wait in a worker. */
  queueDepth?: number;
}

/** What a worker posts back for each task. */
export type WorkerReply<Result> =
  | { id: number; ok: true; result: Result }
  | { id: number; ok: false; message: string }
  /** Not an answer: how far the task has read, while it runs. */
  | { id: number; progress: number };

interface Job<Task, Result> {
  id: number;
  task: Task;
  resolve(result: Result): void;
  reject(error: Error): void;
  onProgress?: (bytesRead: number) => void;
  small: boolean;
  /**
   * Set when a worker died holding this task and others, so which one killed it is unknown: it is sent
   * again only to an idle worker, alone, and fails if that worker dies too.
   */
  alone: boolean;
}

/** What the pool posts to a worker for each task. */
export interface WorkerRequest<Task> {
  id: number;
  task: Task;
  /** May run beside another small task. */
  small: boolean;
}

interface Slot<Task, Result> {
  worker: WorkerThread;
  /** Tasks sent to the worker, in the order it runs them: the first is running, the rest wait in its port. */
  jobs: Job<Task, Result>[];
  /** The script has loaded; only ready workers get tasks. */
  ready: boolean;
}

const READY = "tidemark:worker-ready";

/** CommonJS code run with `eval: true`: register tsx for a .ts script, import the script, say so. */
function bootstrapCode(script: URL): string {
  const load = script.pathname.endsWith(".ts")
    ? [`import(${JSON.stringify(import.meta.resolve("tsx/esm/api"))})`, `  .then((tsx) => { tsx.register(); return import(${JSON.stringify(script.href)}); })`]
    : [`import(${JSON.stringify(script.href)})`];
  return [`const { parentPort } = require("node:worker_threads");`, ...load, `  .then(() => parentPort.postMessage(${JSON.stringify(READY)}));`].join("\n");
}

export function createWorkerPool<Task, Result>(options: WorkerPoolOptions): WorkerPool<Task, Result> {
  const queue: Job<Task, Result>[] = [];
  const slots: Slot<Task, Result>[] = [];
  let nextId = 1;
  let closing = false;
  let idleWaiters: (() => void)[] = [];
  /** Set when a worker died before its script loaded: respawning would only repeat that. */
  let startFailure: Error | null = null;

  const spawn = (): Slot<Task, Result> => {
    const worker = new (workerThreads().Worker)(bootstrapCode(options.script), {
      eval: true,
      workerData: options.workerData,
      resourceLimits: { maxOldGenerationSizeMb: options.maxOldGenerationSizeMb, maxYoungGenerationSizeMb: options.maxYoungGenerationSizeMb },
      stdout: false,
      stderr: false,
    });
    const slot: Slot<Task, Result> = { worker, jobs: [], ready: false };
    worker.on("message", (reply: WorkerReply<Result> | typeof READY) => {
      if (reply === READY) {
        slot.ready = true;
        dispatch();
        return;
      }
      const at = slot.jobs.findIndex((j) => j.id === reply.id);
      if (at < 0) return;
      const job = slot.jobs[at];
      if ("progress" in reply) {
        job.onProgress?.(reply.progress);
        return;
      }
      slot.jobs.splice(at, 1);
      if (reply.ok) job.resolve(reply.result);
      else job.reject(new Error(reply.message));
      dispatch();
    });
    const lost = (why: string): void => {
      // Holding one task, the worker died of it. Holding more, any of the running ones may be the cause:
      // they all go back to the front of the queue, each to be tried again alone.
      const held = slot.jobs.splice(0);
      const job = held.length === 1 ? held[0] : null;
      if (!job) {
        for (const j of held) j.alone = true;
        queue.unshift(...held);
      }
      const index = slots.indexOf(slot);
      if (index >= 0) slots.splice(index, 1);
      if (!slot.ready) {
        startFailure = new WorkerStartError(`a measuring worker could not start: ${why}`);
        for (const queued of queue.splice(0)) queued.reject(startFailure);
      } else {
        job?.reject(new WorkerCrashError(why));
        if (!closing) slots.push(spawn());
      }
      dispatch();
    };
    worker.on("error", (error) => lost(`worker failed: ${error.message.split("\n")[0]}`));
    worker.on("exit", (code) => {
      if (slots.includes(slot)) lost(`worker exited with code ${code}`);
    });
    return slot;
  };

  const depth = Math.max(1, options.queueDepth ?? 1);
  const send = (slot: Slot<Task, Result>, job: Job<Task, Result>): void => {
    slot.jobs.push(job);
    slot.worker.postMessage({ id: job.id, task: job.task, small: job.small && !job.alone } satisfies WorkerRequest<Task>);
  };
  const dispatch = (): void => {
    // Idle workers first; then small tasks behind the shortest line of a busy one.
    for (const slot of slots) {
      if (!slot.ready || slot.jobs.length > 0 || queue.length === 0) continue;
      send(slot, queue.shift()!);
    }
    while (queue.length > 0 && queue[0].small && !queue[0].alone) {
      let shortest: Slot<Task, Result> | null = null;
      for (const slot of slots) {
        if (!slot.ready || slot.jobs.length >= depth || slot.jobs.some((j) => j.alone)) continue;
        if (!shortest || slot.jobs.length < shortest.jobs.length) shortest = slot;
      }
      if (!shortest) break;
      send(shortest, queue.shift()!);
    }
    if (slots.every((s) => s.jobs.length === 0) && queue.length === 0) {
      const waiters = idleWaiters;
      idleWaiters = [];
      for (const w of waiters) w();
    }
  };

  for (let i = 0; i < options.size; i++) slots.push(spawn());

  const stopAll = async (): Promise<void> => {
    closing = true;
    const workers = slots.splice(0).map((s) => {
      for (const job of s.jobs.splice(0)) job.reject(new WorkerCrashError("worker stopped"));
      return s.worker;
    });
    await Promise.all(workers.map((w) => w.terminate()));
  };

  const rejectQueued = (): void => {
    for (const job of queue.splice(0)) job.reject(new WorkerCrashError("pool closed before the task started"));
  };

  return {
    size: options.size,
    run(task, onProgress, small = false) {
      if (startFailure) return Promise.reject(startFailure);
      if (closing) return Promise.reject(new WorkerCrashError("pool is closed"));
      return new Promise<Result>((resolve, reject) => {
        queue.push({ id: nextId++, task, resolve, reject, onProgress, small, alone: false });
        dispatch();
      });
    },
    async close() {
      rejectQueued();
      if (slots.some((s) => s.jobs.length > 0)) await new Promise<void>((resolve) => idleWaiters.push(resolve));
      await stopAll();
    },
    async terminate() {
      rejectQueued();
      await stopAll();
    },
  };
}
