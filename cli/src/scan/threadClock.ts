/**
 * The calling thread's own time on a core and time spent waiting for one (Linux's
 * /proc/thread-self/schedstat: nanoseconds on the CPU, then nanoseconds runnable on a run queue). For
 * the benchmark's stage times only: with two threads on one file, the busier thread's CPU time is what a
 * quiet machine's wall time would follow, and the run-queue time says how much other processes took.
 * NaN where the file does not exist (other systems, or a kernel without scheduler statistics).
 */
import { readFileSync } from "node:fs";

export interface ThreadClock {
  cpuMs: number;
  runQueueMs: number;
}

export function readThreadClock(): ThreadClock {
  try {
    const [onCpu, waiting] = readFileSync("/proc/thread-self/schedstat", "latin1").trim().split(/\s+/).map(Number);
    return { cpuMs: onCpu / 1e6, runQueueMs: waiting / 1e6 };
  } catch {
    return { cpuMs: Number.NaN, runQueueMs: Number.NaN };
  }
}
