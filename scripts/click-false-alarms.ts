/**
 * False alarms of the click detector on clean material, the figure issue #18 asks for: 10 minutes of pink
 * noise and 10 minutes of synthesised speech (espeak-ng, resampled to 48 kHz by sox), at the default
 * threshold. Not part of `npm test` (it takes a minute); run `node --import tsx scripts/click-false-alarms.ts`.
 */
import { createClickDetector } from "../shared/src/analysis/clicks.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../shared/src/types/settings.ts";
import { pinkNoise } from "./lib/synth.ts";
import { espeakAvailable, espeakSpeech } from "../tests/helpers/externalAudio.ts";

const RATE = 48000;
const SECONDS = 600;

function count(x: Float32Array): { clicks: number; ms: number; times: string[] } {
  const t = performance.now();
  const d = createClickDetector(RATE, 1, DEFAULT_ANALYSIS_SETTINGS);
  for (let at = 0; at < x.length; at += 65536) {
    const n = Math.min(65536, x.length - at);
    d.push([x.subarray(at, at + n)], n);
  }
  const { findings, counts } = d.finish();
  return { clicks: counts[0], ms: performance.now() - t, times: findings.map((f) => (f.startSeconds ?? 0).toFixed(3)) };
}

const report = (name: string, r: ReturnType<typeof count>) =>
  console.log(`${name}: ${r.clicks} click(s) in ${SECONDS / 60} min (${(SECONDS / (r.ms / 1000)).toFixed(0)}× realtime)${r.times.length ? ` at ${r.times.join(", ")} s` : ""}`);

console.log(`click threshold ${DEFAULT_ANALYSIS_SETTINGS.clickThresholdDb} dB`);
report("pink noise, −20 dBFS RMS", count(pinkNoise({ sampleRateHz: RATE, seconds: SECONDS, rmsDbfs: -20, seed: 3 })));
if (espeakAvailable) {
  const texts = [
    "The ferry leaves the harbour at nine, and the passengers wait on the pier with their tickets ready.",
    "In the winter of nineteen seventy eight the lighthouse choir sang in the old chapel by the sea.",
    "Please mind the gap between the gangway and the deck; the tide is turning and the ropes are wet.",
    "Tape four. The deckhands sang while they coiled the ropes and the gulls screamed over the breakwater.",
    "The harbourmaster kept a log of every ship, every storm and every lost umbrella for forty years.",
    "On the night shift you could hear the foghorn across the whole terminal, steady as a clock.",
  ];
  const parts: Float32Array[] = [];
  let length = 0;
  for (let k = 0; length < SECONDS * RATE; k++) {
    const s = espeakSpeech(`${texts[k % texts.length]} Entry ${k + 1}.`, RATE).samples;
    parts.push(s);
    length += s.length;
  }
  const speech = new Float32Array(SECONDS * RATE);
  let at = 0;
  for (const p of parts) {
    speech.set(p.subarray(0, Math.min(p.length, speech.length - at)), at);
    at += p.length;
    if (at >= speech.length) break;
  }
  report("espeak-ng speech, 48 kHz", count(speech));
} else console.log("espeak-ng not installed: speech skipped");
