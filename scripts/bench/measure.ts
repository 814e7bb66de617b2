/**
 * Runs a command and measures it from the outside: wall time (our clock), CPU time and peak RSS of the
 * process as the OS counts them (GNU time's wait4 figures when /usr/bin/time exists; otherwise polled from
 * /proc/<pid>/status VmHWM and /proc/<pid>/stat, which can miss the last few milliseconds).
 */
import { spawn } from "node:child_process";
import { existsSync } from "node:fs";
import { readFile, rm } from "node:fs/promises";
import path from "node:path";
import { watchTreeRss } from "./treeRss.ts";

export interface Measured {
  wallSeconds: number;
  /** User + system CPU seconds (all threads). */
  cpuSeconds: number;
  peakRssMb: number;
  /**
   * Cores kept busy by everything else on the machine during the run (from /proc/stat, minus this run's own
   * CPU time): the shared machine's noise, to read the other figures by. NaN where /proc/stat is missing.
   */
  otherCores: number;
  exitCode: number;
  stderr: string;
  /** With `treeRss`: the largest RSS summed over the command's process tree (sampled every 20 ms), MB. */
  treePeakRssMb?: number;
}

const GNU_TIME = "/usr/bin/time";
export const hasGnuTime = existsSync(GNU_TIME);
const CLOCK_TICKS_PER_SECOND = 100;

export async function measure(command: string, args: string[], o: { cwd: string; env?: NodeJS.ProcessEnv; scratchDir: string; treeRss?: boolean }): Promise<Measured> {
  const timeFile = path.join(o.scratchDir, `time-${process.pid}-${Date.now()}.txt`);
  const useGnuTime = hasGnuTime;
  const argv = useGnuTime ? ["-f", "%U %S %M", "-o", timeFile, command, ...args] : args;
  const busyBefore = await busyCpuSeconds();
  const started = process.hrtime.bigint();
  const child = spawn(useGnuTime ? GNU_TIME : command, argv, { cwd: o.cwd, env: o.env ?? process.env, stdio: ["ignore", "ignore", "pipe"] });
  // GNU time itself is not part of what is measured: only its child and that child's descendants.
  const tree = o.treeRss && child.pid !== undefined ? watchTreeRss(child.pid, { skipRoot: useGnuTime }) : null;
  let stderr = "";
  child.stderr.setEncoding("utf8");
  child.stderr.on("data", (d: string) => {
    if (stderr.length < 20000) stderr += d;
  });
  let polled = { rssKb: 0, cpuTicks: 0 };
  const poll = useGnuTime ? null : setInterval(() => void pollProc(child.pid).then((p) => (polled = p ?? polled)), 10);
  const exitCode = await new Promise<number>((resolve, reject) => {
    child.on("error", reject);
    child.on("close", (code) => resolve(code ?? -1));
  });
  const wallSeconds = Number(process.hrtime.bigint() - started) / 1e9;
  const treePeakRssMb = tree ? await tree.stop() : undefined;
  const busy = (await busyCpuSeconds()) - busyBefore;
  if (poll) clearInterval(poll);
  const others = (cpuSeconds: number) => Math.max(0, (busy - cpuSeconds) / wallSeconds);
  if (!useGnuTime) {
    const cpuSeconds = polled.cpuTicks / CLOCK_TICKS_PER_SECOND;
    return { wallSeconds, cpuSeconds, peakRssMb: polled.rssKb / 1024, otherCores: others(cpuSeconds), exitCode, stderr, treePeakRssMb };
  }
  const text = await readFile(timeFile, "utf8");
  await rm(timeFile, { force: true });
  // GNU time writes "Command exited with non-zero status N" before the format line.
  const line = text.trim().split("\n").pop() ?? "";
  const [user, system, rssKb] = line.split(/\s+/).map(Number);
  return { wallSeconds, cpuSeconds: user + system, peakRssMb: rssKb / 1024, otherCores: others(user + system), exitCode, stderr, treePeakRssMb };
}

/** Cores the machine keeps busy over the next `ms` milliseconds (this process idle meanwhile). */
export async function machineBusyCores(ms: number): Promise<number> {
  const before = await busyCpuSeconds();
  await new Promise((resolve) => setTimeout(resolve, ms));
  return ((await busyCpuSeconds()) - before) / (ms / 1000);
}

/** Busy CPU time of the whole machine so far (user, nice, system, irq, softirq, steal), seconds. */
async function busyCpuSeconds(): Promise<number> {
  try {
    const line = (await readFile("/proc/stat", "utf8")).split("\n")[0];
    const [user, nice, system, , , irq, softirq, steal] = line.trim().split(/\s+/).slice(1).map(Number);
    return (user + nice + system + irq + softirq + steal) / CLOCK_TICKS_PER_SECOND;
  } catch {
    return NaN;
  }
}

async function pollProc(pid: number | undefined): Promise<{ rssKb: number; cpuTicks: number } | null> {
  if (pid === undefined) return null;
  try {
    const [status, stat] = await Promise.all([readFile(`/proc/${pid}/status`, "utf8"), readFile(`/proc/${pid}/stat`, "utf8")]);
    const hwm = /VmHWM:\s+(\d+)/.exec(status);
    // Fields after the command name (which may hold spaces): utime and stime are the 12th and 13th.
    const fields = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
    return { rssKb: hwm ? Number(hwm[1]) : 0, cpuTicks: Number(fields[11]) + Number(fields[12]) };
  } catch {
    return null;
  }
}

export function median(xs: number[]): number {
  if (xs.length === 0) return NaN;
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}
