/**
 * The scan's worker pool (cli/src/scan/workerPool.ts) with a stand-in worker (tests/fixtures/poolWorker.mjs):
 * small tasks are sent ahead to a busy worker up to its queue depth, large ones never are, and when a worker
 * dies holding several tasks each is tried again alone, so only the one that kills a worker fails.
 */
import { describe, expect, it } from "vitest";
import { createWorkerPool, WorkerCrashError } from "../../cli/src/scan/workerPool.ts";

interface Task {
  name: string;
  ms: number;
  crash?: boolean;
}
interface Result {
  name: string;
  threadId: number;
  sentWhenStarted: number;
}

const script = new URL("../fixtures/poolWorker.mjs", import.meta.url);

describe("worker pool queue depth", () => {
  it("sends small tasks ahead to a busy worker, at most queueDepth at a time", async () => {
    const pool = createWorkerPool<Task, Result>({ size: 1, script, queueDepth: 3 });
    try {
      const results = await Promise.all(["a", "b", "c", "d"].map((name) => pool.run({ name, ms: 60 }, undefined, true)));
      expect(results.map((r) => r.name)).toEqual(["a", "b", "c", "d"]);
      // b started with a, b and c already in the worker's port; d is sent once a slot frees (after a).
      expect(results[1].sentWhenStarted).toBe(3);
      expect(results[3].sentWhenStarted).toBe(4);
    } finally {
      await pool.close();
    }
  });

  it("sends a task that is not small only to an idle worker", async () => {
    const pool = createWorkerPool<Task, Result>({ size: 1, script, queueDepth: 3 });
    try {
      const results = await Promise.all(["a", "b", "c"].map((name) => pool.run({ name, ms: 40 })));
      expect(results.map((r) => r.sentWhenStarted)).toEqual([1, 2, 3]);
    } finally {
      await pool.close();
    }
  });

  it("fails only the task that kills a worker on its own; the others it held run again", async () => {
    const pool = createWorkerPool<Task, Result>({ size: 1, script, queueDepth: 3 });
    try {
      const crash = pool.run({ name: "crash", ms: 0, crash: true }, undefined, true);
      const after = [pool.run({ name: "b", ms: 10 }, undefined, true), pool.run({ name: "c", ms: 10 }, undefined, true)];
      await expect(crash).rejects.toBeInstanceOf(WorkerCrashError);
      const [b, c] = await Promise.all(after);
      expect([b.name, c.name]).toEqual(["b", "c"]);
      expect(b.threadId).toBe(c.threadId);
    } finally {
      await pool.close();
    }
  });
});
