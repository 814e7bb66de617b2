/**
 * Microbenchmark of the FFT adapter's amplitude spectra (shared/src/spectral/fft.ts, issue #22): per size,
 * µs of CPU per `amplitudeSquared` call through fft.js (double precision, windowing in time) and through
 * PFFFT (WASM SIMD, single precision, Hann applied in frequency), copies in and out of the WASM heap
 * included. Rounds alternate the two engines and the median round is printed, since the machine is shared.
 *
 *   node --import tsx scripts/bench/fft.ts [--sizes 512,2048,4096] [--rounds 9]
 *
 * Sizes in use (2026-12): the STFT's defaultFftSize (2048 at 44.1/48 kHz, 4096 at 88.2/96 kHz, up to
 * 65536), the fine/hum spectrum's humFftSize at ≈ 6 kHz (4096), the low-frequency detail (2048), close-ups
 * (a quarter of the STFT's: 512 at 48 kHz), and files shorter than one FFT (64 … 1024). The fingerprint's
 * 1024-point pair transform (`pairSpectrum`) stays on fft.js and is not timed here.
 */
import { createSpectrumAnalyzer, type SpectrumAnalyzer } from "@tidemark/shared/spectral/fft";
import { seededRandom } from "../lib/synth.ts";

function option(name: string, fallback: string): string {
  const i = process.argv.indexOf(name);
  return i >= 0 && process.argv[i + 1] !== undefined ? process.argv[i + 1] : fallback;
}

const sizes = option("--sizes", "64,256,512,1024,2048,4096,8192,16384,65536").split(",").map(Number);
const rounds = Number(option("--rounds", "9"));

const cpuMicros = (): number => {
  const u = process.cpuUsage();
  return u.user + u.system;
};

function perCall(analyzer: SpectrumAnalyzer, frame: Float32Array, out: Float64Array, calls: number): number {
  const t0 = cpuMicros();
  for (let i = 0; i < calls; i++) analyzer.amplitudeSquared(frame, out);
  return (cpuMicros() - t0) / calls;
}

const median = (xs: number[]): number => [...xs].sort((a, b) => a - b)[xs.length >> 1];

console.log(`FFT adapter, amplitudeSquared: µs CPU per call (median of ${rounds} alternating rounds), Node ${process.version}`);
console.log("     N    fft.js    PFFFT   ratio  engine");
for (const n of sizes) {
  const rnd = seededRandom(n);
  const frame = new Float32Array(n).map(() => 2 * rnd() - 1);
  const engines = [createSpectrumAnalyzer(n, { engine: "fft.js" }), createSpectrumAnalyzer(n)];
  const out = new Float64Array(n / 2 + 1);
  // About 20 ms of work a round and engine at fft.js's speed.
  const calls = Math.max(10, Math.round(4e5 / (n * Math.log2(n))));
  for (const a of engines) perCall(a, frame, out, 5 * calls); // warm-up: let both reach optimised code
  const times: number[][] = [[], []];
  for (let r = 0; r < rounds; r++) engines.forEach((a, e) => times[e].push(perCall(a, frame, out, calls)));
  const [slow, fast] = times.map(median);
  console.log(`${String(n).padStart(6)} ${slow.toFixed(2).padStart(9)} ${fast.toFixed(2).padStart(8)} ${(slow / fast).toFixed(2).padStart(6)}×  ${engines[1].engine}`);
}
