/**
 * Many small files (issue #22): a folder of one-second files (48 kHz/24-bit stereo pink noise, each its
 * own seed) scanned with `tidemark scan DIR --workers 2 --out report.json`, no images asked for. Files per
 * second are files over the command's whole wall time (start-up, crawl, report included); peak RSS is
 * the largest of GNU time's figure and the process tree's summed RSS sampled from /proc.
 * `npm run bench -- --only small` (`--small-files N`, default 2000).
 */
import { mkdir, readFile } from "node:fs/promises";
import path from "node:path";
import { measure, median, type Measured } from "./measure.ts";
import { busyNote, fmt, metText, type SectionContext, type Target } from "./section.ts";
import { synthesiseWav } from "./synthWav.ts";

export const SMALL_FILE_TARGETS = { filesPerSecond: 150, peakRssMb: 300 };
export const SMALL_FILES_DEFAULT = 2000;

export interface SmallFilesResult {
  files: number;
  runs: number;
  wallSeconds: number;
  cpuSeconds: number;
  filesPerSecond: number;
  cpuMsPerFile: number;
  /** The larger of GNU time's and the sampled process tree's, over all runs. */
  peakRssMb: number;
  otherCores: number;
  samples: { wallSeconds: number; cpuSeconds: number; peakRssMb: number; treePeakRssMb: number | null; otherCores: number }[];
}

export async function benchSmallFiles(ctx: SectionContext, count: number): Promise<SmallFilesResult> {
  const dir = path.join(ctx.root, "small");
  await mkdir(dir, { recursive: true });
  const t0 = performance.now();
  for (let i = 0; i < count; i++) {
    await synthesiseWav({ path: path.join(dir, `take-${String(i + 1).padStart(5, "0")}.wav`), seconds: 1, sampleRateHz: 48000, channels: 2, bitDepth: 24, noise: "pink", rmsDbfs: -20, seed: 1000 + i });
  }
  ctx.log(`\n10. small files: ${count} one-second files (wrote them in ${fmt((performance.now() - t0) / 1000, 1)} s), scan --workers 2, ${ctx.repeats} run(s)`);
  const out = path.join(ctx.scratch, "small-report.json");
  const runs: Measured[] = [];
  for (let r = 0; r < ctx.repeats; r++) {
    await ctx.beforeRun();
    const m = await measure(process.execPath, [ctx.bin, "scan", dir, "--workers", "2", "--quiet", "--out", out], { cwd: ctx.scratch, env: ctx.env, scratchDir: ctx.scratch, treeRss: true });
    // Exit 1: files failed their profile, not a broken scan.
    if (m.exitCode !== 0 && m.exitCode !== 1) throw new Error(`scan of ${count} small files exited with ${m.exitCode}:\n${m.stderr}`);
    const report = JSON.parse(await readFile(out, "utf8")) as { summary: { error: number }; files: unknown[] };
    if (report.files.length !== count || report.summary.error > 0) throw new Error(`expected ${count} measured files, got ${report.files.length} with ${report.summary.error} errors`);
    runs.push(m);
    ctx.log(`  ${fmt(m.wallSeconds, 1)} s wall (${fmt(count / m.wallSeconds, 0)} files/s), ${fmt(m.cpuSeconds, 1)} s CPU, peak RSS ${fmt(m.peakRssMb, 0)} MB (tree ${fmt(m.treePeakRssMb ?? NaN, 0)} MB)${busyNote(m.otherCores)}`);
  }
  const wallSeconds = median(runs.map((m) => m.wallSeconds));
  const cpuSeconds = median(runs.map((m) => m.cpuSeconds));
  const result: SmallFilesResult = {
    files: count,
    runs: runs.length,
    wallSeconds,
    cpuSeconds,
    filesPerSecond: count / wallSeconds,
    cpuMsPerFile: (1000 * cpuSeconds) / count,
    peakRssMb: Math.max(...runs.map((m) => Math.max(m.peakRssMb, m.treePeakRssMb ?? 0))),
    otherCores: median(runs.map((m) => m.otherCores)),
    samples: runs.map((m) => ({ wallSeconds: m.wallSeconds, cpuSeconds: m.cpuSeconds, peakRssMb: m.peakRssMb, treePeakRssMb: m.treePeakRssMb ?? null, otherCores: m.otherCores })),
  };
  const t = smallFileTargets(result);
  ctx.log(`  ${fmt(result.filesPerSecond, 0)} files/s (${fmt(result.cpuMsPerFile, 1)} ms CPU a file) — target ≥ ${SMALL_FILE_TARGETS.filesPerSecond}: ${metText(t.smallFilesPerSecond.met)}`);
  ctx.log(`  peak RSS ${fmt(result.peakRssMb, 0)} MB — target ≤ ${SMALL_FILE_TARGETS.peakRssMb} MB: ${metText(t.smallFilesPeakRssMb.met)}`);
  return result;
}

export function smallFileTargets(r: SmallFilesResult): Record<string, Target> {
  return {
    smallFilesPerSecond: { value: r.filesPerSecond, target: `≥ ${SMALL_FILE_TARGETS.filesPerSecond} files/s (#22: ${r.files} one-second files, --workers 2, median wall)`, met: r.filesPerSecond >= SMALL_FILE_TARGETS.filesPerSecond },
    smallFilesPeakRssMb: { value: r.peakRssMb, target: `≤ ${SMALL_FILE_TARGETS.peakRssMb} MB (#22: the same scan, whole process tree)`, met: r.peakRssMb <= SMALL_FILE_TARGETS.peakRssMb },
  };
}
