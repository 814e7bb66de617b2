/**
 * CPU seconds (user + system, all threads) of running processes, from /proc/<pid>/stat: what the bench
 * reads to say where a distributed run's CPU went (workers, server, PostgreSQL) on a machine whose cores
 * they all share. Linux only; elsewhere every figure is NaN.
 */
import { readdir, readFile } from "node:fs/promises";

const CLOCK_TICKS_PER_SECOND = 100;

interface ProcStat {
  ppid: number;
  cpuSeconds: number;
}

async function procStat(pid: number): Promise<ProcStat | null> {
  try {
    const stat = await readFile(`/proc/${pid}/stat`, "utf8");
    // Fields after the command name (which may hold spaces): ppid is the 2nd, utime and stime the 12th and 13th.
    const fields = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
    return { ppid: Number(fields[1]), cpuSeconds: (Number(fields[11]) + Number(fields[12])) / CLOCK_TICKS_PER_SECOND };
  } catch {
    return null;
  }
}

/** CPU seconds of one process so far; NaN once it is gone (or without /proc). */
export async function processCpuSeconds(pid: number | undefined): Promise<number> {
  if (pid === undefined) return NaN;
  return (await procStat(pid))?.cpuSeconds ?? NaN;
}

/** CPU seconds of a process and its live children (PostgreSQL's postmaster and backends). */
export async function treeCpuSeconds(rootPid: number): Promise<number> {
  let names: string[];
  try {
    names = await readdir("/proc");
  } catch {
    return NaN;
  }
  const stats = await Promise.all(names.filter((n) => /^\d+$/.test(n)).map(async (n) => ({ pid: Number(n), stat: await procStat(Number(n)) })));
  let total = 0;
  for (const { pid, stat } of stats) if (stat && (pid === rootPid || stat.ppid === rootPid)) total += stat.cpuSeconds;
  return total;
}

/**
 * Follows a child process's CPU time until it exits (polled, so the last `everyMs` may be missed):
 * `last()` is the final figure.
 */
export function followCpu(pid: number | undefined, everyMs = 100): { last(): number; stop(): void } {
  let last = 0;
  const poll = async (): Promise<void> => {
    const now = await processCpuSeconds(pid);
    if (Number.isFinite(now)) last = now;
  };
  void poll();
  const timer = setInterval(() => void poll(), everyMs);
  return {
    last: () => last,
    stop: () => clearInterval(timer),
  };
}
