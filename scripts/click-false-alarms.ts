/**
 * False alarms of the click detector on clean material, the figure issue #18 asks for: 10 minutes of pink
 * noise and 10 minutes of synthesised speech (espeak-ng, resampled to 48 kHz by sox), at the default
 * threshold; and 10 minutes more of other sentences in four other voices, dithered. Not part of `npm test`
 * (it takes a minute); run `node --import tsx scripts/click-false-alarms.ts`.
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
/** SECONDS of espeak-ng sentences one after another, the k-th spoken by voices[k % voices.length]. */
function speechCorpus(texts: string[], voices: string[], dither: boolean): Float32Array {
  const speech = new Float32Array(SECONDS * RATE);
  for (let k = 0, at = 0; at < speech.length; k++) {
    const s = espeakSpeech(`${texts[k % texts.length]} Entry ${k + 1}.`, RATE, { voice: voices[k % voices.length], dither }).samples;
    speech.set(s.subarray(0, Math.min(s.length, speech.length - at)), at);
    at += s.length;
  }
  return speech;
}

if (espeakAvailable) {
  const texts = [
    "The ferry leaves the harbour at nine, and the passengers wait on the pier with their tickets ready.",
    "In the winter of nineteen seventy eight the lighthouse choir sang in the old chapel by the sea.",
    "Please mind the gap between the gangway and the deck; the tide is turning and the ropes are wet.",
    "Tape four. The deckhands sang while they coiled the ropes and the gulls screamed over the breakwater.",
    "The harbourmaster kept a log of every ship, every storm and every lost umbrella for forty years.",
    "On the night shift you could hear the foghorn across the whole terminal, steady as a clock.",
  ];
  report("espeak-ng speech, 48 kHz", count(speechCorpus(texts, ["en"], false)));
  // Other sentences and voices than the detector was tuned on, dithered by sox: a check it was not fitted to one voice.
  const others = [
    "My grandmother worked in the fish market for thirty two years, and she never once missed the morning boat.",
    "Quick brown foxes jump over lazy dogs, but the old sheepdog at the ferry terminal never cared for foxes at all.",
    "She said: put the kettle on, pack the sandwiches, and check the tide tables before you go anywhere near the rocks.",
    "Six thick thistle sticks. Peter Piper picked a peck of pickled peppers. Big black bugs bleed blue black blood.",
    "Why would anyone paint the lighthouse purple? Nobody knows, but the committee voted for it in nineteen eighty four.",
    "The accordion player from Galway came every Thursday; he played reels and jigs until the last bus had gone.",
  ];
  const voices = ["en-us", "en+f3", "en-gb-x-rp", "en-029"];
  report(`espeak-ng speech, voices ${voices.join(", ")}, dithered`, count(speechCorpus(others, voices, true)));
} else console.log("espeak-ng not installed: speech skipped");
