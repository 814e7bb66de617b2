/**
 * `npm run bench`: the scan's speed and memory, measured on the real CLI (cli/bin/tidemark.js, prebuilt by
 * cli/bin/build.mjs first) over inputs synthesised into a temporary folder and deleted afterwards. Not part
 * of `npm test`. Every figure is a median of --repeats runs, and ratios compare runs made in this one
 * invocation, since the machine is shared and noisy. Targets are those of issue #8 (and #22's default scan
 * ≥ 3× ffmpeg's pass).
 *
 *   npm run bench -- --out result.json     full run (≈ 5 min on 2 cores, ≈ 6 GB of temporary disk)
 *   npm run bench -- --quick               short inputs, one repeat, no 4 GB RF64 or linearity runs
 *   npm run bench -- --stages FILE.wav     in-process time of each analyser part on one file
 *                                          (--only render,decode: just those stages)
 *
 * Section 7 (closeups, issue #16) times the default scan against `--no-closeups` on the main length with
 * 10 planted 40 ms dropouts: `npm run bench -- --only closeups` runs just that.
 *
 * Section 8 (longflac, issues #17/#22: scripts/bench/longFlac.ts) scans FLACs of 15 min, 1 h and 4 h: peak RSS
 * and linearity, each printed with met / NOT met beside the RF64's and section 4's.
 *
 * Sections 9 and 10 (issue #22) are start-up (`tidemark --version`, the scan of one 1 s file;
 * scripts/bench/startup.ts) and many small files (scripts/bench/smallFiles.ts): `--only startup,small`.
 *
 * Options: --seconds N (main file, default 600), --files N (files for the worker comparison, default 8),
 * --small-files N (section 10, default 2000; --quick: 200),
 * --repeats N (default 3), --no-rf64, --no-linearity, --no-white, --no-flac, --no-longflac, --longflac-base S (section 8's 1×, default 900), --only single,white,workers,linearity,rf64,flac,closeups,longflac,startup,small
 * (just those sections), --from-source (run through tsx instead of the bundle), --keep (leave the inputs),
 * --tmp DIR (where the inputs go), --baseline REV (also time the CLI as of git revision REV on the main
 * file, alternating, for a before/after ratio in the same run), --wait-calm S (before each run, wait up to S seconds for the other
 * processes to leave both cores free: on a shared machine the worker comparison means little otherwise).
 */
import { execFileSync, spawnSync } from "node:child_process";
import { cpus, tmpdir, totalmem, release } from "node:os";
import { mkdir, mkdtemp, readdir, readFile, rm, statfs, symlink, writeFile } from "node:fs/promises";
import path from "node:path";
import { projectRoot } from "./lib/paths.ts";
import { hasGnuTime, machineBusyCores, measure, median, type Measured } from "./bench/measure.ts";
import { runStages } from "./bench/stages.ts";
import { staleBundleSources } from "../cli/bin/bundleState.mjs";
import { defaultWorkerCount } from "../cli/src/options.ts";
import { plantDropouts } from "./bench/plantFaults.ts";
import { benchSmallFiles, SMALL_FILES_DEFAULT, smallFileTargets, type SmallFilesResult } from "./bench/smallFiles.ts";
import { benchStartup, startupTargets, type StartupResult } from "./bench/startup.ts";
import { synthesiseWav, type SynthOptions } from "./bench/synthWav.ts";
import { runLongFlac, type LongFlacResult } from "./bench/longFlac.ts";

interface Options {
  out: string | null;
  quick: boolean;
  seconds: number;
  files: number;
  repeats: number;
  rf64: boolean;
  linearity: boolean;
  white: boolean;
  flac: boolean;
  longFlac: boolean;
  /** Section 8's base length, s (16× it is the long FLAC; default 900: 4 hours). */
  longFlacBase: number;
  fromSource: boolean;
  keep: boolean;
  tmp: string;
  stages: string | null;
  only: Set<string> | null;
  waitCalmSeconds: number;
  baseline: string | null;
  smallFiles: number;
}

/** Other processes using less than this many cores count as a calm machine. */
const CALM_BUSY_CORES = 0.25;

const SECTIONS = ["single", "white", "workers", "linearity", "rf64", "flac", "closeups", "longflac", "startup", "small"];

function parseOptions(argv: string[]): Options {
  const o: Options = { out: null, quick: false, seconds: 600, files: 8, repeats: 3, rf64: true, linearity: true, white: true, flac: true, longFlac: true, longFlacBase: 900, fromSource: false, keep: false, tmp: tmpdir(), stages: null, only: null, waitCalmSeconds: 0, baseline: null, smallFiles: SMALL_FILES_DEFAULT };
  const explicit = new Set<string>();
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const value = (): string => {
      const v = argv[++i];
      if (v === undefined) throw new Error(`${a} needs a value`);
      return v;
    };
    const count = (): number => {
      const n = Number(value());
      if (!Number.isFinite(n) || n <= 0) throw new Error(`${a} needs a positive number`);
      explicit.add(a);
      return n;
    };
    if (a === "--out") o.out = path.resolve(value());
    else if (a === "--quick") o.quick = true;
    else if (a === "--seconds") o.seconds = count();
    else if (a === "--files") o.files = Math.round(count());
    else if (a === "--repeats") o.repeats = Math.round(count());
    else if (a === "--no-rf64") o.rf64 = false;
    else if (a === "--no-linearity") o.linearity = false;
    else if (a === "--no-white") o.white = false;
    else if (a === "--no-flac") o.flac = false;
    else if (a === "--no-longflac") o.longFlac = false;
    else if (a === "--longflac-base") o.longFlacBase = count();
    else if (a === "--from-source") o.fromSource = true;
    else if (a === "--keep") o.keep = true;
    else if (a === "--tmp") o.tmp = path.resolve(value());
    else if (a === "--stages") o.stages = path.resolve(value());
    else if (a === "--wait-calm") o.waitCalmSeconds = count();
    else if (a === "--baseline") o.baseline = value();
    else if (a === "--small-files") o.smallFiles = Math.round(count());
    else if (a === "--only") {
      o.only = new Set(value().split(","));
    }
    else throw new Error(`unknown option ${a} (see the comment at the top of scripts/bench.ts)`);
  }
  // With --stages, --only names stages (checked by runStages); otherwise sections.
  if (o.only && !o.stages) {
    for (const name of o.only) if (!SECTIONS.includes(name)) throw new Error(`--only takes ${SECTIONS.join(", ")}; got ${name}`);
  }
  if (o.only) {
    o.white &&= o.only.has("white");
    o.linearity &&= o.only.has("linearity");
    o.rf64 &&= o.only.has("rf64");
    o.flac &&= o.only.has("flac");
    o.longFlac &&= o.only.has("longflac");
  }
  if (o.quick) {
    if (!explicit.has("--seconds")) o.seconds = 120;
    if (!explicit.has("--files")) o.files = 4;
    if (!explicit.has("--repeats")) o.repeats = 1;
    if (!explicit.has("--small-files")) o.smallFiles = 200;
    o.rf64 = false;
    o.linearity = false;
    o.white = false;
    o.longFlac = false;
  }
  return o;
}

const SAMPLE_RATE_HZ = 48000;
const CHANNELS = 2;
const BIT_DEPTH = 24;
const BYTES_PER_SECOND = SAMPLE_RATE_HZ * CHANNELS * (BIT_DEPTH / 8);
/** The RF64 check: past 4 GiB, where RIFF's 32-bit sizes end. */
const RF64_BYTES = 4.5e9;
/** Linearity: base × 1, 4, 16. */
const LINEARITY_FACTORS = [1, 4, 16];
/** Issue #8; vsFfmpeg is its "about twice as fast as the loudness pass" (150x against ≈ 73x). */
const TARGETS = { realtime: 150, vsFfmpeg: 2, defaultVsFfmpeg: 3, workerScaling: 1.8, peakRssMb: 150, linearity: 1.15, flacVsWav: 1.5, closeupsOverhead: 1.15 };
/** Issue #22: the default scan (default workers, so one file's two sides on two threads) against ffmpeg. */
/** Issue #16: findings planted in the close-up section's file. */
const CLOSEUP_FINDINGS = 10;

interface ScanSample extends Measured {
  /** Stage times of the file(s), summed over files, ms. */
  stagesMs: Record<string, number>;
  /** The CLI ran from the bundle (not the sources through tsx). */
  bundled: boolean;
}

/** Others edit sources while the bench runs: rebuild the bundle whenever it went stale, so every run uses it. */
function ensureBundle(o: Options): void {
  if (o.fromSource) return;
  const stale = staleBundleSources();
  if (stale !== null && stale.length === 0) return;
  if (stale) log(`  (rebuilding the CLI bundle: ${stale.length} source(s) changed)`);
  execFileSync(process.execPath, [path.join(projectRoot, "cli/bin/build.mjs")], { stdio: ["ignore", "ignore", "inherit"] });
}

function machine() {
  const cpu = cpus();
  return {
    cpuModel: cpu[0]?.model ?? "unknown",
    cores: cpu.length,
    memoryGb: Math.round(totalmem() / 2 ** 30),
    node: process.version,
    kernel: release(),
    gnuTime: hasGnuTime,
  };
}

async function waitForCalm(o: Options): Promise<void> {
  if (o.waitCalmSeconds <= 0) return;
  const deadline = Date.now() + o.waitCalmSeconds * 1000;
  let busy = await machineBusyCores(1000);
  if (busy < CALM_BUSY_CORES) return;
  log(`  waiting for a calm machine (others busy: ${busy.toFixed(2)} cores)…`);
  while (busy >= CALM_BUSY_CORES && Date.now() < deadline) busy = await machineBusyCores(2000);
  log(busy < CALM_BUSY_CORES ? "  calm now" : `  still busy (${busy.toFixed(2)} cores) after ${o.waitCalmSeconds} s: measuring anyway`);
}

/**
 * The CLI as of an earlier revision, for a before/after ratio: its cli/ and shared/ from `git archive`, and a
 * node_modules of links to ours except for the workspace packages, which point at the old copies.
 */
async function checkoutBaseline(rev: string, root: string): Promise<string> {
  const dir = path.join(root, "baseline");
  await mkdir(path.join(dir, "node_modules", "@tidemark"), { recursive: true });
  const archive = execFileSync("git", ["-C", projectRoot, "archive", rev, "cli", "shared", "package.json"], { maxBuffer: 1 << 28 });
  execFileSync("tar", ["-x", "-C", dir], { input: archive });
  const modules = path.join(projectRoot, "node_modules");
  for (const name of await readdir(modules)) {
    if (name !== "@tidemark") await symlink(path.join(modules, name), path.join(dir, "node_modules", name));
  }
  for (const pkg of ["cli", "shared"]) await symlink(path.join(dir, pkg), path.join(dir, "node_modules", "@tidemark", pkg));
  return path.join(dir, "cli", "bin", "tidemark.js");
}

async function scan(dir: string, workers: number, o: Options, scratch: string, bin = path.join(projectRoot, "cli/bin/tidemark.js"), extraArgs: string[] = []): Promise<ScanSample> {
  await waitForCalm(o);
  // After the wait, which may be long: others keep editing sources.
  ensureBundle(o);
  const timings = path.join(scratch, `stages-${Date.now()}.jsonl`);
  const out = path.join(scratch, "report.json");
  const env = { ...process.env, TIDEMARK_STAGE_TIMINGS: timings, TIDEMARK_FROM_SOURCE: o.fromSource ? "1" : "0" };
  const args = [bin, "scan", dir, "--workers", String(workers), "--quiet", "--spectrograms", path.join(scratch, "png"), "--out", out, ...extraArgs];
  const m = await measure(process.execPath, args, { cwd: scratch, env, scratchDir: scratch });
  // Exit 1 means a file failed its profile (noise is not a preservation master), not that the scan broke.
  if (m.exitCode !== 0 && m.exitCode !== 1) throw new Error(`scan of ${dir} exited with ${m.exitCode}:\n${m.stderr}`);
  const report = JSON.parse(await readFile(out, "utf8")) as { summary: { error: number }; files: { error: unknown }[] };
  if (report.summary.error > 0) throw new Error(`scan of ${dir} reported errors: ${JSON.stringify(report.files.map((f) => f.error))}`);
  const stagesMs: Record<string, number> = {};
  let bundled = true;
  // A baseline older than the stage timings writes none.
  const lines = (await readFile(timings, "utf8").catch(() => "")).trim();
  for (const line of lines ? lines.split("\n") : []) {
    const entry = JSON.parse(line) as { bundled: boolean; timingsMs: Record<string, number> };
    bundled &&= entry.bundled === true;
    for (const [k, v] of Object.entries(entry.timingsMs)) stagesMs[k] = (stagesMs[k] ?? 0) + v;
  }
  await rm(timings, { force: true });
  // A baseline is unpacked without a bundle, so it always runs through tsx: only our own CLI should not.
  const ours = bin === path.join(projectRoot, "cli/bin/tidemark.js");
  if (ours && !bundled && !o.fromSource && lines) log("  warning: this run used the sources through tsx (a source changed during the run)");
  return { ...m, stagesMs, bundled };
}

async function ffmpegPass(file: string, o: Options, scratch: string): Promise<Measured> {
  await waitForCalm(o);
  const args = ["-hide_banner", "-nostats", "-i", file, "-af", "ebur128=peak=true,astats", "-f", "null", "-"];
  const m = await measure("ffmpeg", args, { cwd: scratch, scratchDir: scratch });
  if (m.exitCode !== 0) throw new Error(`ffmpeg exited with ${m.exitCode}:\n${m.stderr.slice(-2000)}`);
  return m;
}

/** Debian's reference decoder testing the file (decode + CRC + MD5 check), the yardstick for our FLAC reading. */
async function flacTest(file: string, o: Options, scratch: string): Promise<Measured> {
  await waitForCalm(o);
  const m = await measure("flac", ["-s", "-t", file], { cwd: scratch, scratchDir: scratch });
  if (m.exitCode !== 0) throw new Error(`flac -t exited with ${m.exitCode}:\n${m.stderr.slice(-2000)}`);
  return m;
}

function hasFlac(): boolean {
  return spawnSync("flac", ["--version"], { stdio: "ignore" }).status === 0;
}

function hasFfmpeg(): boolean {
  return spawnSync("ffmpeg", ["-hide_banner", "-version"], { stdio: "ignore" }).status === 0;
}

async function synth(dir: string, name: string, seconds: number, extra: Partial<SynthOptions> = {}): Promise<string> {
  await mkdir(dir, { recursive: true });
  const file = path.join(dir, name);
  const t = performance.now();
  await synthesiseWav({ path: file, seconds, sampleRateHz: SAMPLE_RATE_HZ, channels: CHANNELS, bitDepth: BIT_DEPTH, noise: "pink", rmsDbfs: -20, ...extra });
  log(`  wrote ${path.basename(dir)}/${name} (${seconds.toFixed(0)} s, ${((seconds * BYTES_PER_SECOND) / 1e6).toFixed(0)} MB) in ${((performance.now() - t) / 1000).toFixed(1)} s`);
  return file;
}

function busyNote(m: Measured): string {
  return Number.isFinite(m.otherCores) ? ` (others busy: ${m.otherCores.toFixed(2)} cores)` : "";
}

function log(line: string): void {
  process.stderr.write(`${line}\n`);
}

const fmt = (x: number, digits = 1): string => (Number.isFinite(x) ? x.toFixed(digits) : "–");

interface Summary {
  runs: number;
  audioSeconds: number;
  wallSeconds: number;
  cpuSeconds: number;
  peakRssMb: number;
  realtimeWall: number;
  realtimeCpu: number;
  mbPerSecond: number;
  stagesMs: Record<string, number>;
  /** Median cores busy with other processes during the runs. */
  otherCores: number;
  samples: { wallSeconds: number; cpuSeconds: number; peakRssMb: number; otherCores: number; bundled: boolean }[];
}

function summarise(samples: ScanSample[], audioSeconds: number, bytes: number): Summary {
  const wall = median(samples.map((s) => s.wallSeconds));
  const cpu = median(samples.map((s) => s.cpuSeconds));
  const stagesMs: Record<string, number> = {};
  for (const k of Object.keys(samples[0]?.stagesMs ?? {})) stagesMs[k] = median(samples.map((s) => s.stagesMs[k] ?? 0));
  return {
    runs: samples.length,
    audioSeconds,
    wallSeconds: wall,
    cpuSeconds: cpu,
    peakRssMb: Math.max(...samples.map((s) => s.peakRssMb)),
    realtimeWall: audioSeconds / wall,
    realtimeCpu: audioSeconds / cpu,
    mbPerSecond: bytes / 1e6 / wall,
    stagesMs,
    otherCores: median(samples.map((s) => s.otherCores)),
    samples: samples.map((s) => ({ wallSeconds: s.wallSeconds, cpuSeconds: s.cpuSeconds, peakRssMb: s.peakRssMb, otherCores: s.otherCores, bundled: s.bundled })),
  };
}

async function main(): Promise<void> {
  const o = parseOptions(process.argv.slice(2));
  if (o.stages) {
    await runStages(o.stages, o.seconds, o.repeats, o.only ? [...o.only].join(",") : null);
    return;
  }
  const info = machine();
  log(`tidemark bench: ${info.cpuModel}, ${info.cores} cores, Node ${info.node}${o.quick ? " (quick)" : ""}`);
  ensureBundle(o);

  const root = await mkdtemp(path.join(o.tmp, "tidemark-bench-"));
  const result: Record<string, unknown> = { schema: "tidemark.bench/1", startedAt: new Date().toISOString(), machine: info, options: o };
  try {
    const needBytes = o.seconds * BYTES_PER_SECOND * (o.files + 2) + (o.linearity ? 21 * 150 * BYTES_PER_SECOND : 0) + (o.rf64 ? RF64_BYTES : 0);
    const fs = await statfs(root);
    const freeBytes = fs.bavail * fs.bsize;
    log(`inputs in ${root}: need ≈ ${(needBytes / 1e9).toFixed(1)} GB, ${(freeBytes / 1e9).toFixed(1)} GB free`);
    if (o.rf64 && freeBytes < needBytes + 2e9) {
      log("  not enough room for the 4.5 GB RF64 file: skipping it (--no-rf64)");
      o.rf64 = false;
    }
    const scratch = path.join(root, "scratch");
    await mkdir(scratch, { recursive: true });
    const audioBytes = (seconds: number) => seconds * BYTES_PER_SECOND;

    log("synthesising inputs (24-bit / 48 kHz stereo pink noise at −20 dBFS RMS)");
    const doSingle = !o.only || o.only.has("single");
    // The FLAC section encodes the same file, so it needs it too.
    const needsMain = doSingle || !o.only || o.only.has("flac");
    const mainFile = needsMain ? await synth(path.join(root, "single"), "pink.wav", o.seconds, { seed: 1 }) : "";
    const whiteFile = o.white ? await synth(path.join(root, "white"), "white.wav", o.seconds, { noise: "white", seed: 2 }) : null;
    const doWorkers = !o.only || o.only.has("workers");
    const batchDir = path.join(root, "batch");
    for (let i = 0; i < (doWorkers ? o.files : 0); i++) await synth(batchDir, `pink-${i + 1}.wav`, o.seconds, { seed: 10 + i });

    // 1. One file, one worker, against ffmpeg's loudness + true-peak + statistics pass.
    // The default scan runs with the default workers (#22: one file's spectral side on a second thread,
    // the default when a core is spare), and once more with --no-spectral-thread (one thread) to compare;
    // #8's analysis stays on --workers 1 and one thread, as it was measured before.
    const defaultWorkers = defaultWorkerCount();
    if (doSingle) log(`\n1. ${o.seconds} s file: default scan (--workers ${defaultWorkers}, the default) and --no-fingerprint --workers 1, ${o.repeats} run(s) each, alternating with ffmpeg`);
    const ffmpeg = doSingle && hasFfmpeg();
    const singles: ScanSample[] = [];
    const splits: ScanSample[] = [];
    // Issue #8's "full default analysis" (every measure of #3 and #4, SHA-256, both PNGs) predates the
    // fingerprint (#11), which the default scan now adds: both are timed, in the same rounds.
    const measuresOnly: ScanSample[] = [];
    const ffmpegRuns: Measured[] = [];
    const baselineBin = doSingle && o.baseline ? await checkoutBaseline(o.baseline, root) : null;
    const baselineRuns: ScanSample[] = [];
    for (let r = 0; r < (doSingle ? o.repeats : 0); r++) {
      singles.push(await scan(path.dirname(mainFile), defaultWorkers, o, scratch));
      log(`  tidemark ${fmt(singles[r].wallSeconds, 2)} s wall, ${fmt(singles[r].cpuSeconds, 2)} s CPU, ${fmt(singles[r].peakRssMb, 0)} MB${busyNote(singles[r])}`);
      splits.push(await scan(path.dirname(mainFile), defaultWorkers, o, scratch, undefined, ["--no-spectral-thread"]));
      log(`  tidemark --no-spectral-thread ${fmt(splits[r].wallSeconds, 2)} s wall, ${fmt(splits[r].cpuSeconds, 2)} s CPU, ${fmt(splits[r].peakRssMb, 0)} MB${busyNote(splits[r])}`);
      measuresOnly.push(await scan(path.dirname(mainFile), 1, o, scratch, undefined, ["--no-fingerprint", "--no-spectral-thread"]));
      const m = measuresOnly[r];
      log(`  tidemark --no-fingerprint ${fmt(m.wallSeconds, 2)} s wall, ${fmt(m.cpuSeconds, 2)} s CPU, ${fmt(m.peakRssMb, 0)} MB${busyNote(m)}`);
      if (ffmpeg) {
        ffmpegRuns.push(await ffmpegPass(mainFile, o, scratch));
        log(`  ffmpeg   ${fmt(ffmpegRuns[r].wallSeconds, 2)} s wall, ${fmt(ffmpegRuns[r].cpuSeconds, 2)} s CPU, ${fmt(ffmpegRuns[r].peakRssMb, 0)} MB${busyNote(ffmpegRuns[r])}`);
      }
      if (baselineBin) {
        baselineRuns.push(await scan(path.dirname(mainFile), 1, o, scratch, baselineBin));
        const b = baselineRuns[r];
        log(`  ${o.baseline} ${fmt(b.wallSeconds, 2)} s wall, ${fmt(b.cpuSeconds, 2)} s CPU, ${fmt(b.peakRssMb, 0)} MB${busyNote(b)}`);
      }
    }
    if (doSingle) result.single = summarise(singles, o.seconds, audioBytes(o.seconds));
    if (doSingle) result.measuresOnly = summarise(measuresOnly, o.seconds, audioBytes(o.seconds));
    if (doSingle) result.singleOneThread = summarise(splits, o.seconds, audioBytes(o.seconds));
    const single = result.single as Summary | undefined;
    if (single && baselineRuns.length > 0) {
      const b = summarise(baselineRuns, o.seconds, audioBytes(o.seconds));
      result.baseline = { revision: o.baseline, ...b, speedupWall: b.wallSeconds / single.wallSeconds, speedupCpu: b.cpuSeconds / single.cpuSeconds };
    }
    if (ffmpeg) {
      const ff = {
        wallSeconds: median(ffmpegRuns.map((m) => m.wallSeconds)),
        cpuSeconds: median(ffmpegRuns.map((m) => m.cpuSeconds)),
        peakRssMb: Math.max(...ffmpegRuns.map((m) => m.peakRssMb)),
        otherCores: median(ffmpegRuns.map((m) => m.otherCores)),
      };
      const only = result.measuresOnly as Summary | undefined;
      if (single && only) {
        result.ffmpeg = {
          filter: "ebur128=peak=true,astats",
          ...ff,
          realtimeWall: o.seconds / ff.wallSeconds,
          speedupWall: ff.wallSeconds / single.wallSeconds,
          speedupCpu: ff.cpuSeconds / single.cpuSeconds,
          oneThreadSpeedupWall: ff.wallSeconds / (result.singleOneThread as Summary).wallSeconds,
          measuresOnlySpeedupWall: ff.wallSeconds / only.wallSeconds,
          measuresOnlySpeedupCpu: ff.cpuSeconds / only.cpuSeconds,
        };
      }
    }

    // 2. White noise: the true peak's worst case (most outputs near the running maximum).
    if (whiteFile) {
      log(`\n2. ${o.seconds} s of white noise, --workers 1`);
      const runs: ScanSample[] = [];
      for (let r = 0; r < Math.min(2, o.repeats); r++) runs.push(await scan(path.dirname(whiteFile), 1, o, scratch));
      result.white = summarise(runs, o.seconds, audioBytes(o.seconds));
    }

    // 3. Worker scaling: the same batch at 1 and 2 workers, alternating. One thread per file in both (#8's
    // pool scaling): by default --workers 1 would give each file a second thread on the spare core (#22).
    if (doWorkers) log(`\n3. ${o.files} files of ${o.seconds} s, --workers 1 vs 2 (--no-spectral-thread), ${o.repeats} run(s) each`);
    const w1: ScanSample[] = [];
    const w2: ScanSample[] = [];
    for (let r = 0; r < (doWorkers ? o.repeats : 0); r++) {
      w1.push(await scan(batchDir, 1, o, scratch, undefined, ["--no-spectral-thread"]));
      w2.push(await scan(batchDir, 2, o, scratch, undefined, ["--no-spectral-thread"]));
      log(`  1 worker ${fmt(w1[r].wallSeconds, 2)} s${busyNote(w1[r])}; 2 workers ${fmt(w2[r].wallSeconds, 2)} s, ${fmt(w2[r].peakRssMb, 0)} MB${busyNote(w2[r])}`);
    }
    if (doWorkers) {
      const batchAudio = o.files * o.seconds;
      const s1 = summarise(w1, batchAudio, audioBytes(batchAudio));
      const s2 = summarise(w2, batchAudio, audioBytes(batchAudio));
      // Each pair of runs was made back to back; the pair least disturbed by other processes is also kept.
      const pairs = w1.map((a, i) => ({ scaling: a.wallSeconds / w2[i].wallSeconds, otherCores: Math.max(a.otherCores, w2[i].otherCores) }));
      const calmest = pairs.reduce((p, q) => (q.otherCores < p.otherCores ? q : p));
      result.workers = { files: o.files, one: s1, two: s2, scaling: s1.wallSeconds / s2.wallSeconds, pairs, calmestPair: calmest };
      await rm(batchDir, { recursive: true, force: true });
    }

    // 4. Linearity: 1×, 4×, 16× the length; the cost per audio second should not grow.
    if (o.linearity) {
      const base = 150;
      log(`\n4. linearity: ${LINEARITY_FACTORS.map((f) => `${f * base} s`).join(", ")}, --workers 1`);
      const rows = [];
      for (const f of LINEARITY_FACTORS) {
        const dir = path.join(root, `linear-${f}`);
        await synth(dir, "pink.wav", base * f, { seed: 30 + f });
        const runs: ScanSample[] = [];
        for (let r = 0; r < Math.min(2, o.repeats); r++) runs.push(await scan(dir, 1, o, scratch));
        const s = summarise(runs, base * f, audioBytes(base * f));
        const inFileMs = (s.stagesMs.read ?? 0) + (s.stagesMs.decode ?? 0) + (s.stagesMs.hash ?? 0) + (s.stagesMs.analyse ?? 0) + (s.stagesMs.render ?? 0);
        rows.push({ factor: f, ...s, inFileMsPerAudioSecond: inFileMs / (base * f) });
        log(`  ${base * f} s: ${fmt(s.wallSeconds, 2)} s wall, ${fmt(s.cpuSeconds, 2)} s CPU, ${fmt(s.peakRssMb, 0)} MB, others ${fmt(s.otherCores, 2)} cores`);
        await rm(dir, { recursive: true, force: true });
      }
      result.linearity = { rows, ratio16: rows[2].inFileMsPerAudioSecond / rows[0].inFileMsPerAudioSecond, ratio4: rows[1].inFileMsPerAudioSecond / rows[0].inFileMsPerAudioSecond };
    }

    // 5. Memory on a file past 4 GiB (RF64 with ds64).
    if (o.rf64) {
      const seconds = Math.ceil(RF64_BYTES / BYTES_PER_SECOND);
      log(`\n5. RF64 of ${(RF64_BYTES / 1e9).toFixed(1)} GB (${(seconds / 3600).toFixed(1)} h), --workers 1`);
      const dir = path.join(root, "rf64");
      // Pink noise repeating every 60 s: the same work per second as fresh noise, written at disk speed.
      await synth(dir, "long.rf64", seconds, { rf64: true, seed: 50, periodSeconds: 60 });
      const run = await scan(dir, 1, o, scratch);
      result.rf64 = summarise([run], seconds, audioBytes(seconds));
      log(`  ${fmt(run.wallSeconds, 1)} s wall, ${fmt(run.cpuSeconds, 1)} s CPU, ${fmt(run.peakRssMb, 0)} MB${busyNote(run)}`);
      await rm(dir, { recursive: true, force: true });
    }

    // 6. The main file as FLAC (issue #17): the same audio, scanned from FLAC and from WAV in the same rounds.
    if (o.flac && hasFlac() && (!o.only || o.only.has("flac"))) {
      log(`\n6. ${o.seconds} s file as FLAC (flac -5) vs the same audio as WAV, --workers 1, ${o.repeats} run(s) each, with flac -t beside`);
      const dir = path.join(root, "flac");
      await mkdir(dir, { recursive: true });
      const flacFile = path.join(dir, "pink.flac");
      execFileSync("flac", ["-s", "-f", "-5", mainFile, "-o", flacFile]);
      const wavRuns: ScanSample[] = [];
      const flacRuns: ScanSample[] = [];
      const testRuns: Measured[] = [];
      for (let r = 0; r < o.repeats; r++) {
        wavRuns.push(await scan(path.dirname(mainFile), 1, o, scratch));
        flacRuns.push(await scan(dir, 1, o, scratch));
        testRuns.push(await flacTest(flacFile, o, scratch));
        log(`  wav ${fmt(wavRuns[r].wallSeconds, 2)} s; flac ${fmt(flacRuns[r].wallSeconds, 2)} s, ${fmt(flacRuns[r].peakRssMb, 0)} MB${busyNote(flacRuns[r])}; flac -t ${fmt(testRuns[r].wallSeconds, 2)} s`);
      }
      const wav = summarise(wavRuns, o.seconds, audioBytes(o.seconds));
      const fl = summarise(flacRuns, o.seconds, audioBytes(o.seconds));
      const t = { wallSeconds: median(testRuns.map((m) => m.wallSeconds)), cpuSeconds: median(testRuns.map((m) => m.cpuSeconds)) };
      result.flac = { wav, flac: fl, flacTest: t, ratioToWav: fl.wallSeconds / wav.wallSeconds, ratioToFlacTest: fl.wallSeconds / t.wallSeconds };
      await rm(dir, { recursive: true, force: true });
    }

    // 7. Close-ups (issue #16): the default scan against --no-closeups, alternating, on one file with planted findings.
    if (!o.only || o.only.has("closeups")) {
      log(`\n7. close-ups: ${o.seconds} s with ${CLOSEUP_FINDINGS} planted 40 ms dropouts, default vs --no-closeups, --workers 1, ${o.repeats} run(s) each`);
      const dir = path.join(root, "closeups");
      const file = await synth(dir, "pink-faults.wav", o.seconds, { seed: 60 });
      await plantDropouts({ path: file, seconds: o.seconds, sampleRateHz: SAMPLE_RATE_HZ, channels: CHANNELS, bitDepth: BIT_DEPTH, count: CLOSEUP_FINDINGS, dropoutSeconds: 0.04 });
      const withRuns: ScanSample[] = [];
      const withoutRuns: ScanSample[] = [];
      let closeupsMade = 0;
      for (let r = 0; r < o.repeats; r++) {
        withRuns.push(await scan(dir, 1, o, scratch));
        const report = JSON.parse(await readFile(path.join(scratch, "report.json"), "utf8")) as { files: { closeups?: unknown[] }[] };
        closeupsMade = report.files[0]?.closeups?.length ?? 0;
        withoutRuns.push(await scan(dir, 1, o, scratch, undefined, ["--no-closeups"]));
        log(`  close-ups ${fmt(withRuns[r].wallSeconds, 2)} s wall (${closeupsMade} made)${busyNote(withRuns[r])}; --no-closeups ${fmt(withoutRuns[r].wallSeconds, 2)} s${busyNote(withoutRuns[r])}`);
      }
      const on = summarise(withRuns, o.seconds, audioBytes(o.seconds));
      const off = summarise(withoutRuns, o.seconds, audioBytes(o.seconds));
      const overhead = on.wallSeconds / off.wallSeconds;
      // CPU time as well: on a shared machine the wall-clock ratio moves with the neighbours' load.
      const cpuOverhead = on.cpuSeconds / off.cpuSeconds;
      const pairs = withRuns.map((w, i) => w.wallSeconds / withoutRuns[i].wallSeconds);
      result.closeups = { findings: CLOSEUP_FINDINGS, closeupsMade, on, off, overhead, cpuOverhead, pairs };
      log(`  close-ups cost ${fmt((overhead - 1) * 100, 1)} % wall (target ≤ +${fmt((TARGETS.closeupsOverhead - 1) * 100, 0)} %): ${overhead <= TARGETS.closeupsOverhead ? "met" : "NOT met"}`);
      log(`  (pairs ${pairs.map((p) => `${fmt((p - 1) * 100, 0)} %`).join(", ")}; CPU ${fmt((cpuOverhead - 1) * 100, 1)} %, medians ${fmt(on.cpuSeconds, 2)} s against ${fmt(off.cpuSeconds, 2)} s)`);
      await rm(dir, { recursive: true, force: true });
    }

    // 8. FLACs of 15 min, 1 h and 4 h (issues #17, #22): peak RSS and linearity.
    if (o.longFlac && hasFlac()) {
      log(`\n8. FLAC of ${o.longFlacBase} s × 1, 4, 16 (piped from the synthesiser into flac -5), --workers 1`);
      result.longFlac = await runLongFlac(root, (dir) => scan(dir, 1, o, scratch), log, o.longFlacBase);
    }

    // 9 and 10. Start-up and many small files (issue #22), each in its own module.
    const section = { root, scratch, repeats: o.repeats, quick: o.quick, bin: path.join(projectRoot, "cli/bin/tidemark.js"), log, env: { ...process.env, TIDEMARK_FROM_SOURCE: o.fromSource ? "1" : "0" } };
    const beforeRun = async (): Promise<void> => {
      await waitForCalm(o);
      ensureBundle(o);
    };
    if (!o.only || o.only.has("startup")) result.startup = await benchStartup({ ...section, beforeRun });
    if (!o.only || o.only.has("small")) result.small = await benchSmallFiles({ ...section, beforeRun }, o.smallFiles);

    result.finishedAt = new Date().toISOString();
    result.targets = judgeTargets(result);
    printTable(result, o);
    if (o.out) {
      await writeFile(o.out, `${JSON.stringify(result, null, 2)}\n`);
      log(`\nwrote ${o.out}`);
    }
  } finally {
    if (!o.keep) await rm(root, { recursive: true, force: true });
    else log(`inputs kept in ${root}`);
  }
}

function judgeTargets(r: Record<string, unknown>): Record<string, { value: number; target: string; met: boolean }> {
  const workers = r.workers as { scaling: number; one: Summary } | undefined;
  const linearity = r.linearity as { ratio16: number; rows: Summary[] } | undefined;
  const flac = r.flac as { flac: Summary; ratioToWav: number } | undefined;
  const longFlac = r.longFlac as LongFlacResult | null | undefined;
  // One worker: #8's analysis (--workers 1), not the default scan, which may use a second thread (#22).
  const rss = [(r.measuresOnly as Summary | undefined)?.peakRssMb, workers?.one.peakRssMb, ...(linearity?.rows.map((x) => x.peakRssMb) ?? []), (r.rf64 as Summary | undefined)?.peakRssMb, flac?.flac.peakRssMb, longFlac?.peakRssMb];
  const peakRss = Math.max(...rss.filter((x): x is number => x !== undefined));
  const t: Record<string, { value: number; target: string; met: boolean }> = {};
  const only = r.measuresOnly as Summary | undefined;
  const ff = r.ffmpeg as { measuresOnlySpeedupWall: number } | undefined;
  if (only) {
    t.realtimeWall = { value: only.realtimeWall, target: `≥ ${TARGETS.realtime}x (#8's analysis: scan --no-fingerprint, one thread)`, met: only.realtimeWall >= TARGETS.realtime };
  }
  const ffDefault = r.ffmpeg as { speedupWall: number; oneThreadSpeedupWall?: number } | undefined;
  if (ffDefault) {
    const v = ffDefault.speedupWall;
    t.defaultVsFfmpeg = { value: v, target: `≥ ${TARGETS.defaultVsFfmpeg}× vs ffmpeg (default scan, wall; #22)`, met: v >= TARGETS.defaultVsFfmpeg };
    const one = ffDefault.oneThreadSpeedupWall;
    if (one !== undefined) t.oneThreadVsFfmpeg = { value: one, target: `≥ ${TARGETS.defaultVsFfmpeg}× vs ffmpeg (scan --no-spectral-thread, wall; for comparison)`, met: one >= TARGETS.defaultVsFfmpeg };
  }
  if (ff) {
    t.speedupVsFfmpeg = { value: ff.measuresOnlySpeedupWall, target: `≥ ${TARGETS.vsFfmpeg}x (the same, against ffmpeg in the same rounds)`, met: ff.measuresOnlySpeedupWall >= TARGETS.vsFfmpeg };
  }
  if (workers) t.workerScaling = { value: workers.scaling, target: `≥ ${TARGETS.workerScaling}x`, met: workers.scaling >= TARGETS.workerScaling };
  if (Number.isFinite(peakRss)) t.peakRssMbOneWorker = { value: peakRss, target: `≤ ${TARGETS.peakRssMb} MB`, met: peakRss <= TARGETS.peakRssMb };
  if (flac) t.flacVsWav = { value: flac.ratioToWav, target: `≤ ${TARGETS.flacVsWav} (FLAC scan wall / WAV scan wall, same audio, same rounds)`, met: flac.ratioToWav <= TARGETS.flacVsWav };
  const closeups = r.closeups as { overhead: number } | undefined;
  if (closeups) t.closeupsOverhead = { value: closeups.overhead, target: `≤ ${TARGETS.closeupsOverhead} (#16: close-ups vs --no-closeups, wall)`, met: closeups.overhead <= TARGETS.closeupsOverhead };
  if (r.startup) Object.assign(t, startupTargets(r.startup as StartupResult));
  if (r.small) Object.assign(t, smallFileTargets(r.small as SmallFilesResult));
  if (linearity) t.linearity16x = { value: linearity.ratio16, target: `≤ ${TARGETS.linearity} (per audio second, 16× vs 1×)`, met: linearity.ratio16 <= TARGETS.linearity };
  Object.assign(t, memoryTargets(r.rf64 as Summary | undefined, linearity as { ratio4?: number } | undefined, longFlac));
  return t;
}

/** Issue #22's memory and linearity targets: the 4 GB RF64 and the 4-hour FLAC, each ≤ 150 MB; 1×, 4×, 16× linear. */
function memoryTargets(rf64: Summary | undefined, wavLinearity: { ratio4?: number } | undefined, longFlac: LongFlacResult | null | undefined): Record<string, { value: number; target: string; met: boolean }> {
  const t: Record<string, { value: number; target: string; met: boolean }> = {};
  const rss = `≤ ${TARGETS.peakRssMb} MB`;
  if (rf64) t.rf64PeakRss = { value: rf64.peakRssMb, target: `${rss} (#22: the 4.5 GB RF64, one worker)`, met: rf64.peakRssMb <= TARGETS.peakRssMb };
  if (wavLinearity?.ratio4 !== undefined) t.linearity4x = { value: wavLinearity.ratio4, target: `≤ ${TARGETS.linearity} (per audio second, 4× vs 1×)`, met: wavLinearity.ratio4 <= TARGETS.linearity };
  if (longFlac) {
    const fourHours = longFlac.rows.at(-1)!;
    t.longFlacPeakRss = { value: fourHours.peakRssMb, target: `${rss} (#17/#22: the ${+(fourHours.audioSeconds / 3600).toFixed(2)}-hour FLAC, one worker)`, met: fourHours.peakRssMb <= TARGETS.peakRssMb };
    t.longFlacLinearity4x = { value: longFlac.ratio4, target: `≤ ${TARGETS.linearity} (FLAC, per audio second, 4× vs 1×)`, met: longFlac.ratio4 <= TARGETS.linearity };
    t.longFlacLinearity16x = { value: longFlac.ratio16, target: `≤ ${TARGETS.linearity} (FLAC, per audio second, 16× vs 1×)`, met: longFlac.ratio16 <= TARGETS.linearity };
  }
  return t;
}

function printTable(r: Record<string, unknown>, o: Options): void {
  const single = r.single as Summary | undefined;
  const lines: string[] = [];
  lines.push("", `| measure (${o.seconds} s, 48 kHz/24-bit stereo pink noise, median of ${o.repeats}) | value |`, "|---|---|");
  if (single) singleRows(lines, single);
  const only = r.measuresOnly as Summary | undefined;
  if (only) {
    lines.push(`| #8's analysis (every measure of #3 and #4, SHA-256, PNGs; --no-fingerprint, one thread): wall / CPU | ${fmt(only.wallSeconds, 2)} s / ${fmt(only.cpuSeconds, 2)} s |`);
    lines.push(`| #8's analysis: realtime factor (wall / CPU) | ${fmt(only.realtimeWall, 0)}x / ${fmt(only.realtimeCpu, 0)}x |`);
  }
  otherRows(lines, r);
  lines.push("", "| target | value | met |", "|---|---|---|");
  for (const [k, v] of Object.entries(r.targets as Record<string, { value: number; target: string; met: boolean }>)) lines.push(`| ${k} ${v.target} | ${fmt(v.value, 2)} | ${v.met ? "met" : "NOT met"} |`);
  process.stdout.write(`${lines.join("\n")}\n`);
}

function singleRows(lines: string[], single: Summary): void {
  lines.push(`| default scan (with the fingerprint, #11; default workers, a second thread per long file when a core is spare): wall / CPU | ${fmt(single.wallSeconds, 2)} s / ${fmt(single.cpuSeconds, 2)} s |`);
  lines.push(`| realtime factor (wall / CPU) | ${fmt(single.realtimeWall, 0)}x / ${fmt(single.realtimeCpu, 0)}x |`);
  lines.push(`| throughput | ${fmt(single.mbPerSecond, 0)} MB/s |`);
  lines.push(`| peak RSS (OS) | ${fmt(single.peakRssMb, 0)} MB |`);
  lines.push(`| other processes during these runs (median cores busy) | ${fmt(single.otherCores, 2)} |`);
  const st = single.stagesMs;
  lines.push(
    `| stages (ms): decode / hash / level+loudness+true peak / spectral (FFT) / fingerprint (#11) / paint / PNG | ${["decode", "hash", "level", "spectral", "fingerprint", "paint", "png"].map((k) => fmt(st[k] ?? NaN, 0)).join(" / ")} |`,
  );
  lines.push(`| start-up and the rest (wall − file stages) | ${fmt(single.wallSeconds * 1000 - (st.read + st.decode + st.hash + st.analyse + st.render), 0)} ms |`);
  // #22: with two threads on the file, the busier thread's own CPU time is what a quiet machine's wall follows.
  lines.push(`| threads on the file (ms on a core): reading + level side + images / spectral side; reading thread's wait for a core | ${fmt(st.threadCpu ?? NaN, 0)} / ${fmt(st.spectralThreadCpu ?? NaN, 0)}; ${fmt(st.runQueue ?? NaN, 0)} |`);
}

function otherRows(lines: string[], r: Record<string, unknown>): void {
  const ff = r.ffmpeg as { wallSeconds: number; cpuSeconds: number; speedupWall: number; speedupCpu: number; measuresOnlySpeedupWall: number; measuresOnlySpeedupCpu: number } | undefined;
  if (ff) {
    lines.push(`| ffmpeg ebur128=peak=true,astats: wall / CPU | ${fmt(ff.wallSeconds, 2)} s / ${fmt(ff.cpuSeconds, 2)} s |`);
    lines.push(`| speed-up over ffmpeg, wall / CPU: #8's analysis; the default scan with the fingerprint | ${fmt(ff.measuresOnlySpeedupWall, 2)}x / ${fmt(ff.measuresOnlySpeedupCpu, 2)}x; ${fmt(ff.speedupWall, 2)}x / ${fmt(ff.speedupCpu, 2)}x |`);
  }
  const base = r.baseline as (Summary & { revision: string; speedupWall: number; speedupCpu: number }) | undefined;
  if (base) lines.push(`| baseline ${base.revision}: wall / CPU / peak RSS; speed-up now | ${fmt(base.wallSeconds, 2)} s / ${fmt(base.cpuSeconds, 2)} s / ${fmt(base.peakRssMb, 0)} MB; ${fmt(base.speedupWall, 2)}x / ${fmt(base.speedupCpu, 2)}x |`);
  const white = r.white as Summary | undefined;
  if (white) lines.push(`| white noise (true-peak worst case): realtime wall / CPU | ${fmt(white.realtimeWall, 0)}x / ${fmt(white.realtimeCpu, 0)}x |`);
  const w = r.workers as { files: number; one: Summary; two: Summary; scaling: number; calmestPair: { scaling: number; otherCores: number } } | undefined;
  if (w) {
    lines.push(`| ${w.files} files: 1 worker / 2 workers wall; scaling | ${fmt(w.one.wallSeconds, 1)} s / ${fmt(w.two.wallSeconds, 1)} s; ${fmt(w.scaling, 2)}x |`);
    lines.push(`| scaling of the pair least disturbed (others ≤ ${fmt(w.calmestPair.otherCores, 2)} cores) | ${fmt(w.calmestPair.scaling, 2)}x |`);
    lines.push(`| 2 workers peak RSS; others busy during 1 / 2-worker runs (cores) | ${fmt(w.two.peakRssMb, 0)} MB; ${fmt(w.one.otherCores, 2)} / ${fmt(w.two.otherCores, 2)} |`);
  }
  const lin = r.linearity as { rows: (Summary & { audioSeconds: number; inFileMsPerAudioSecond: number })[]; ratio16: number } | undefined;
  if (lin) {
    lines.push(`| linearity: in-file ms per audio s at ${lin.rows.map((x) => `${x.audioSeconds} s`).join(" / ")} | ${lin.rows.map((x) => fmt(x.inFileMsPerAudioSecond, 2)).join(" / ")} (16×/1× ${fmt(lin.ratio16, 2)}) |`);
    lines.push(`| linearity: peak RSS | ${lin.rows.map((x) => `${fmt(x.peakRssMb, 0)} MB`).join(" / ")} |`);
  }
  const rf = r.rf64 as Summary | undefined;
  if (rf) lines.push(`| RF64 4.5 GB: wall, realtime, peak RSS | ${fmt(rf.wallSeconds, 1)} s, ${fmt(rf.realtimeWall, 0)}x, ${fmt(rf.peakRssMb, 0)} MB |`);
  const lf = r.longFlac as LongFlacResult | null | undefined;
  if (lf) {
    lines.push(`| FLAC ${lf.rows.map((x) => `${(x.audioSeconds / 3600).toFixed(2)} h`).join(" / ")}: in-file ms per audio s (4×/1×, 16×/1×) | ${lf.rows.map((x) => fmt(x.inFileMsPerAudioSecond, 2)).join(" / ")} (${fmt(lf.ratio4, 2)}, ${fmt(lf.ratio16, 2)}) |`);
    lines.push(`| FLAC ${lf.rows.map((x) => `${(x.audioSeconds / 3600).toFixed(2)} h`).join(" / ")}: peak RSS; wall | ${lf.rows.map((x) => `${fmt(x.peakRssMb, 0)} MB`).join(" / ")}; ${lf.rows.map((x) => `${fmt(x.wallSeconds, 1)} s`).join(" / ")} |`);
  }
  const fl = r.flac as { wav: Summary; flac: Summary; flacTest: { wallSeconds: number }; ratioToWav: number; ratioToFlacTest: number } | undefined;
  if (fl) {
    lines.push(`| FLAC: scan wall / WAV scan wall (ratio); flac -t wall (our scan ÷ flac -t) | ${fmt(fl.flac.wallSeconds, 2)} s / ${fmt(fl.wav.wallSeconds, 2)} s (${fmt(fl.ratioToWav, 2)}x); ${fmt(fl.flacTest.wallSeconds, 2)} s (${fmt(fl.ratioToFlacTest, 2)}x) |`);
    lines.push(`| FLAC: peak RSS; decode stage ms | ${fmt(fl.flac.peakRssMb, 0)} MB; ${fmt(fl.flac.stagesMs.decode ?? NaN, 0)} |`);
  }
}

main().catch((error: unknown) => {
  log(`bench: ${error instanceof Error ? error.message : String(error)}`);
  process.exitCode = 1;
});
