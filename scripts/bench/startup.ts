/**
 * Start-up (issue #22): `tidemark --version`, and the scan of one 1-second file with the default options
 * (every measure, fingerprint, spectrogram and waveform PNGs, close-ups, the JSON report written), each run
 * many times as a fresh process and alternated with `node -e 0`, which is what Node alone costs on this
 * machine at that moment. Figures are medians of wall time; CPU time is shown beside them because on a
 * shared machine the wall clock moves with the neighbours' load. `npm run bench -- --only startup`.
 */
import { mkdir, readFile } from "node:fs/promises";
import path from "node:path";
import { measure, median, type Measured } from "./measure.ts";
import { busyNote, fmt, metText, type SectionContext, type Target } from "./section.ts";
import { synthesiseWav } from "./synthWav.ts";

export const STARTUP_TARGETS = { versionMs: 150, oneFileMs: 300 };

interface Runs {
  runs: number;
  wallMs: number;
  cpuMs: number;
  minWallMs: number;
  peakRssMb: number;
  otherCores: number;
}

export interface StartupResult {
  node: Runs;
  version: Runs;
  oneFile: Runs;
}

function summary(ms: Measured[]): Runs {
  return {
    runs: ms.length,
    wallMs: 1000 * median(ms.map((m) => m.wallSeconds)),
    cpuMs: 1000 * median(ms.map((m) => m.cpuSeconds)),
    minWallMs: 1000 * Math.min(...ms.map((m) => m.wallSeconds)),
    peakRssMb: Math.max(...ms.map((m) => m.peakRssMb)),
    otherCores: median(ms.map((m) => m.otherCores)),
  };
}

export async function benchStartup(ctx: SectionContext): Promise<StartupResult> {
  const dir = path.join(ctx.root, "startup");
  await mkdir(dir, { recursive: true });
  await synthesiseWav({ path: path.join(dir, "one-second.wav"), seconds: 1, sampleRateHz: 48000, channels: 2, bitDepth: 24, noise: "pink", rmsDbfs: -20, seed: 70 });
  const out = path.join(ctx.scratch, "startup-report.json");
  const images = path.join(ctx.scratch, "startup-png");
  const rounds = ctx.quick ? 3 : Math.max(9, ctx.repeats);
  ctx.log(`\n9. start-up: tidemark --version and the scan of one 1 s file (default options, PNGs, report), ${rounds} rounds alternating with node -e 0`);

  const run = async (command: string, args: string[]): Promise<Measured> => {
    await ctx.beforeRun();
    const m = await measure(command, args, { cwd: ctx.scratch, env: ctx.env, scratchDir: ctx.scratch });
    // Exit 1: the file failed its profile (pink noise is no preservation master), not a broken scan.
    if (m.exitCode !== 0 && m.exitCode !== 1) throw new Error(`${path.basename(command)} ${args.join(" ")} exited with ${m.exitCode}:\n${m.stderr}`);
    return m;
  };
  const version = () => run(process.execPath, [ctx.bin, "--version"]);
  const scanOne = () => run(process.execPath, [ctx.bin, "scan", dir, "--spectrograms", images, "--out", out]);
  // One unmeasured round: the page cache, and the bundle rebuilt if a source changed.
  await version();
  await scanOne();
  const report = JSON.parse(await readFile(out, "utf8")) as { files: { error: unknown; spectrogram: string | null }[] };
  if (report.files.length !== 1 || report.files[0].error !== null || !report.files[0].spectrogram) {
    throw new Error(`the one-file scan should measure one file and draw its spectrogram, got ${JSON.stringify(report.files)}`);
  }

  const nodeRuns: Measured[] = [];
  const versionRuns: Measured[] = [];
  const scanRuns: Measured[] = [];
  for (let r = 0; r < rounds; r++) {
    nodeRuns.push(await run(process.execPath, ["-e", "0"]));
    versionRuns.push(await version());
    scanRuns.push(await scanOne());
    const [n, v, s] = [nodeRuns[r], versionRuns[r], scanRuns[r]];
    ctx.log(`  node -e 0 ${fmt(n.wallSeconds * 1000, 0)} ms; --version ${fmt(v.wallSeconds * 1000, 0)} ms (CPU ${fmt(v.cpuSeconds * 1000, 0)}); scan ${fmt(s.wallSeconds * 1000, 0)} ms (CPU ${fmt(s.cpuSeconds * 1000, 0)}, ${fmt(s.peakRssMb, 0)} MB)${busyNote(s.otherCores)}`);
  }
  const result = { node: summary(nodeRuns), version: summary(versionRuns), oneFile: summary(scanRuns) };
  const t = startupTargets(result);
  ctx.log(`  tidemark --version: median ${fmt(result.version.wallMs, 0)} ms wall, CPU ${fmt(result.version.cpuMs, 0)} ms (node -e 0: ${fmt(result.node.wallMs, 0)} ms) — target ≤ ${STARTUP_TARGETS.versionMs} ms: ${metText(t.versionWallMs.met)}`);
  ctx.log(`  scan of one 1 s file: median ${fmt(result.oneFile.wallMs, 0)} ms wall, CPU ${fmt(result.oneFile.cpuMs, 0)} ms, peak RSS ${fmt(result.oneFile.peakRssMb, 0)} MB — target ≤ ${STARTUP_TARGETS.oneFileMs} ms: ${metText(t.oneFileWallMs.met)}`);
  return result;
}

export function startupTargets(r: StartupResult): Record<string, Target> {
  return {
    versionWallMs: { value: r.version.wallMs, target: `≤ ${STARTUP_TARGETS.versionMs} ms (#22: tidemark --version, median wall)`, met: r.version.wallMs <= STARTUP_TARGETS.versionMs },
    oneFileWallMs: { value: r.oneFile.wallMs, target: `≤ ${STARTUP_TARGETS.oneFileMs} ms (#22: scan of one 1 s file, PNGs and report, median wall)`, met: r.oneFile.wallMs <= STARTUP_TARGETS.oneFileMs },
  };
}
