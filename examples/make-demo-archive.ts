/**
 * Synthesises the small demo archive of the (invented) Harbourside Sound Archive: two collections of
 * short transfers, some clean and some with a deliberate fault, for trying `tidemark scan` on.
 *
 *   node --import tsx examples/make-demo-archive.ts [OUT_DIR] [--no-speech]
 *
 * Speech comes from espeak-ng when it is installed (tones and noise stand in otherwise). Everything is
 * deterministic: seeded noise, fixed texts. Writes to examples/audio/archive/ by default (git-ignored).
 */
import { spawnSync } from "node:child_process";
import { mkdirSync, rmSync, writeFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { gainDb, hardClip, mix, pinkNoise, rmsDbfs, sine, whiteNoise } from "../scripts/lib/synth.ts";
import { encodeWav, type WavEncodeOptions } from "../scripts/lib/wavWriter.ts";

const SECONDS = 6;

export interface DemoFile {
  /** Relative to the archive root. */
  path: string;
  fault: string;
}

// ---- signal helpers -------------------------------------------------------------------------------

const sinc = (x: number): number => (x === 0 ? 1 : Math.sin(Math.PI * x) / (Math.PI * x));

/** Hann-windowed sinc resampler (16 taps each side): good enough to keep speech free of images. */
function resample(x: Float32Array, fromHz: number, toHz: number): Float32Array {
  const taps = 16;
  const cutoff = Math.min(1, toHz / fromHz);
  const out = new Float32Array(Math.floor((x.length * toHz) / fromHz));
  for (let i = 0; i < out.length; i++) {
    const t = (i * fromHz) / toHz;
    const centre = Math.floor(t);
    let acc = 0;
    for (let k = centre - taps + 1; k <= centre + taps; k++) {
      if (k < 0 || k >= x.length) continue;
      const d = t - k;
      const window = 0.5 + 0.5 * Math.cos((Math.PI * d) / taps);
      acc += x[k] * cutoff * sinc(cutoff * d) * window;
    }
    out[i] = acc;
  }
  return out;
}

/** Linear-phase low-pass (windowed sinc, 255 taps): the "shelf" a lossy encoder leaves. */
function lowPass(x: Float32Array, cutoffHz: number, rateHz: number): Float32Array {
  const half = 127;
  const fc = cutoffHz / rateHz;
  const kernel = new Float64Array(2 * half + 1);
  for (let n = -half; n <= half; n++) {
    kernel[n + half] = 2 * fc * sinc(2 * fc * n) * (0.42 + 0.5 * Math.cos((Math.PI * n) / half) + 0.08 * Math.cos((2 * Math.PI * n) / half));
  }
  const out = new Float32Array(x.length);
  for (let i = 0; i < x.length; i++) {
    let acc = 0;
    for (let k = -half; k <= half; k++) {
      const j = i - k;
      if (j >= 0 && j < x.length) acc += kernel[k + half] * x[j];
    }
    out[i] = acc;
  }
  return out;
}

function fitLength(x: Float32Array, frames: number): Float32Array {
  const out = new Float32Array(frames);
  out.set(x.subarray(0, frames));
  return out;
}

/** Scales a signal to an RMS level (dBFS). */
function atRms(x: Float32Array, targetDbfs: number): Float32Array {
  return gainDb(x, targetDbfs - rmsDbfs(x));
}

/** Short fades so files do not start or end with a click. */
function faded(x: Float32Array, rateHz: number, seconds = 0.05): Float32Array {
  const out = Float32Array.from(x);
  const n = Math.min(Math.round(seconds * rateHz), Math.floor(out.length / 2));
  for (let i = 0; i < n; i++) {
    const g = i / n;
    out[i] *= g;
    out[out.length - 1 - i] *= g;
  }
  return out;
}

/** Rounds to the 16-bit grid: written as 24-bit, the low 8 bits stay zero (padded bit depth). */
function quantiseTo16Bit(x: Float32Array): Float32Array {
  const out = new Float32Array(x.length);
  for (let i = 0; i < x.length; i++) out[i] = Math.round(x[i] * 32768) / 32768;
  return out;
}

// ---- sources --------------------------------------------------------------------------------------

function hasEspeak(): boolean {
  return spawnSync("espeak-ng", ["--version"], { stdio: "ignore" }).status === 0;
}

/** espeak-ng writes a 16-bit mono WAV to stdout (with placeholder sizes, so the data runs to the end). */
function speak(text: string, rateHz: number, voice: string): Float32Array {
  const run = spawnSync("espeak-ng", ["--stdout", "-v", voice, "-s", "150", text], { maxBuffer: 64 * 1024 * 1024 });
  if (run.status !== 0 || !run.stdout) throw new Error(`espeak-ng failed: ${run.stderr?.toString().trim() ?? "no output"}`);
  const bytes: Buffer = run.stdout;
  const dataAt = bytes.indexOf("data", 12, "latin1");
  if (bytes.toString("latin1", 0, 4) !== "RIFF" || dataAt < 0) throw new Error("espeak-ng did not write a WAV");
  const sourceHz = bytes.readUInt32LE(24);
  const frames = Math.floor((bytes.length - dataAt - 8) / 2);
  const samples = new Float32Array(frames);
  for (let i = 0; i < frames; i++) samples[i] = bytes.readInt16LE(dataAt + 8 + 2 * i) / 32768;
  return resample(samples, sourceHz, rateHz);
}

/** Stand-in for speech without espeak-ng: a gliding, syllable-gated tone over noise. */
function speechLike(rateHz: number, seed: number): Float32Array {
  const n = SECONDS * rateHz;
  const noise = pinkNoise({ sampleRateHz: rateHz, seconds: SECONDS, rmsDbfs: -30, seed });
  const out = new Float32Array(n);
  let phase = 0;
  for (let i = 0; i < n; i++) {
    const t = i / rateHz;
    const pitchHz = 140 + 30 * Math.sin(2 * Math.PI * 0.7 * t);
    phase += (2 * Math.PI * pitchHz) / rateHz;
    const syllable = Math.max(0, Math.sin(2 * Math.PI * 3.1 * t)) ** 2;
    out[i] = syllable * (0.3 * Math.sin(phase) + 0.15 * Math.sin(2 * phase) + 0.08 * Math.sin(3 * phase) + noise[i]);
  }
  return out;
}

function voice(text: string, rateHz: number, seed: number, useSpeech: boolean): Float32Array {
  const raw = useSpeech ? speak(text, rateHz, "en-gb") : speechLike(rateHz, seed);
  return fitLength(raw, SECONDS * rateHz);
}

/**
 * A long interview (issue #16's demo: a short fault in the middle of minutes of speech): utterances one
 * after another with short pauses (under the 2 s of a silent gap), until `seconds` are filled. Each
 * utterance is synthesised once and repeated, so minutes cost no more espeak-ng time than a sentence.
 */
function longInterview(lines: string[], rateHz: number, seconds: number, seed: number, useSpeech: boolean): Float32Array {
  const out = new Float32Array(Math.round(seconds * rateHz));
  const utterances = lines.map((text, i) => (useSpeech ? speak(text, rateHz, "en-gb") : speechLike(rateHz, seed + i)));
  const pause = Math.round(0.6 * rateHz);
  let at = 0;
  for (let k = 0; at < out.length; k++) {
    const u = utterances[k % utterances.length];
    out.set(u.subarray(0, Math.min(u.length, out.length - at)), at);
    at += u.length + pause;
  }
  return atRms(out, -24);
}

/** Tape hiss well under the programme: it also carries the spectrum up to Nyquist, as real transfers do. */
const hiss = (rateHz: number, seed: number, db = -66, seconds = SECONDS): Float32Array => whiteNoise({ sampleRateHz: rateHz, seconds, rmsDbfs: db, seed });

/** FTI-05's length and where its dropout falls: minutes of speech, 40 ms missing in the middle. */
const LONG_SECONDS = 240;
const LONG_DROPOUT_SECONDS = 120;

/**
 * The chords the choir sings, one a piece. No two share a pitch class (nor so a harmonic), so each piece
 * is its own recording to the fingerprint; two transfers of one piece are the same recording.
 */
const PIECES = {
  eveningHymn: [220, 261.63, 329.63, 440], // A minor
  harbourPsalm: [233.08, 277.18, 349.23, 466.16], // B-flat minor
  lanternCarol: [246.94, 293.66, 369.99, 493.88], // B minor
};

/** A sustained choir-like chord with slow vibrato and a little breath noise. */
function choir(rateHz: number, seed: number, notesHz: number[]): Float32Array {
  const n = SECONDS * rateHz;
  const out = new Float32Array(n);
  const phases = notesHz.map(() => 0);
  for (let i = 0; i < n; i++) {
    const t = i / rateHz;
    let v = 0;
    for (let k = 0; k < notesHz.length; k++) {
      phases[k] += (2 * Math.PI * notesHz[k] * (1 + 0.004 * Math.sin(2 * Math.PI * (5 + k * 0.3) * t))) / rateHz;
      v += Math.sin(phases[k]) + 0.3 * Math.sin(2 * phases[k]);
    }
    out[i] = v;
  }
  return mix(atRms(out, -20), pinkNoise({ sampleRateHz: rateHz, seconds: SECONDS, rmsDbfs: -45, seed }));
}

/** 50 Hz mains hum and its harmonics (common practice: a ground loop on the playback chain). */
function mainsHum(rateHz: number): Float32Array {
  const parts = [1, 2, 3, 4, 5].map((h) => sine({ frequencyHz: 50 * h, sampleRateHz: rateHz, seconds: SECONDS, peakDbfs: -28 - 3 * h }));
  return mix(...parts);
}

// ---- the archive ----------------------------------------------------------------------------------

interface Recipe extends DemoFile {
  channels: (useSpeech: boolean) => Float32Array[];
  encode: WavEncodeOptions;
}

const FERRY = "Ferry Terminal Interviews 1978";
const CHOIR = "Lighthouse Choir Reels";

const bext = (description: string, reference: string): NonNullable<WavEncodeOptions["bext"]> => ({
  description,
  originator: "Harbourside Sound Archive",
  originatorReference: reference,
  originationDate: "2026-01-15",
  originationTime: "10:00:00",
  codingHistory: "A=ANALOGUE,M=mono,T=quarter-inch tape\r\nA=PCM,F=48000,W=24,M=mono,T=transfer desk 2\r\n",
});

function recipes(): Recipe[] {
  return [
    {
      path: `${FERRY}/FTI-01 harbourmaster.wav`,
      fault: "none (clean speech over tape hiss)",
      encode: { sampleRateHz: 48000, bitDepth: 24 },
      channels: (s) => [faded(mix(atRms(voice("Harbourside Sound Archive. Ferry Terminal Interviews, tape one. The harbourmaster remembers the winter the ferry froze at the pier.", 48000, 11, s), -24), hiss(48000, 1)), 48000)],
    },
    {
      path: `${FERRY}/FTI-02 ticket office.bwf`,
      fault: "hum: 50 Hz and harmonics",
      encode: { sampleRateHz: 48000, bitDepth: 24, bext: bext("Ferry Terminal Interviews 1978, tape 2: ticket office", "HSA-FTI-1978-02") },
      channels: (s) => [faded(mix(atRms(voice("Tape two. We sold the tickets from a wooden hut, and the stove hummed all day long.", 48000, 12, s), -24), mainsHum(48000), hiss(48000, 2)), 48000)],
    },
    {
      path: `${FERRY}/FTI-03 night shift.wav`,
      fault: "dropout: 40 ms of digital silence at 2.5 s",
      encode: { sampleRateHz: 48000, bitDepth: 24 },
      channels: (s) => {
        const x = faded(mix(atRms(voice("Tape three. On the night shift you could hear the foghorn across the whole terminal.", 48000, 13, s), -24), hiss(48000, 3)), 48000);
        x.fill(0, Math.round(2.5 * 48000), Math.round(2.54 * 48000));
        return [x];
      },
    },
    {
      path: `${FERRY}/FTI-04 deckhands (access copy).wav`,
      fault: "band-limited: low-passed at 15 kHz, as a lossy encoder leaves it",
      encode: { sampleRateHz: 44100, bitDepth: 16 },
      channels: (s) => {
        const x = mix(atRms(voice("Tape four. The deckhands sang while they coiled the ropes.", 44100, 14, s), -24), hiss(44100, 4, -50));
        return [faded(lowPass(x, 15000, 44100), 44100)];
      },
    },
    {
      path: `${FERRY}/FTI-05 pier master (long).wav`,
      fault: "dropout: 40 ms of digital silence at 2:00 in a 4-minute interview (the close-up shows it; the overview cannot)",
      encode: { sampleRateHz: 48000, bitDepth: 24 },
      channels: (s) => {
        const lines = [
          "Tape five. The pier master kept a log of every sailing, and the weather, and who was late.",
          "In nineteen seventy eight the new ramp opened, and the old gangway went to the museum.",
          "On foggy mornings we rang the bell by hand, every two minutes, until the ferry answered.",
          "The cafe sold tea in thick white cups, and the gulls waited on the railings for the crusts.",
        ];
        const x = faded(mix(longInterview(lines, 48000, LONG_SECONDS, 15, s), hiss(48000, 11, -66, LONG_SECONDS)), 48000);
        x.fill(0, LONG_DROPOUT_SECONDS * 48000, Math.round((LONG_DROPOUT_SECONDS + 0.04) * 48000));
        return [x];
      },
    },
    {
      path: `${CHOIR}/LCR-01 reel 1 side A.wav`,
      fault: "none (clean stereo choir, 96 kHz): the evening hymn",
      encode: { sampleRateHz: 96000, bitDepth: 24 },
      channels: () => [
        faded(mix(choir(96000, 21, PIECES.eveningHymn), hiss(96000, 5)), 96000),
        faded(mix(gainDb(choir(96000, 22, PIECES.eveningHymn), -1), hiss(96000, 6)), 96000),
      ],
    },
    {
      path: `${CHOIR}/LCR-02 reel 1 side B.wav`,
      fault: "clipping: the chord driven 14 dB into full scale",
      encode: { sampleRateHz: 48000, bitDepth: 24 },
      channels: () => [hardClip(gainDb(choir(48000, 23, PIECES.harbourPsalm), 14)), hardClip(gainDb(choir(48000, 24, PIECES.harbourPsalm), 13))],
    },
    {
      path: `${CHOIR}/LCR-03 rehearsal.wav`,
      fault: "padded bit depth: 16-bit content in a 24-bit file",
      encode: { sampleRateHz: 48000, bitDepth: 24 },
      channels: () => [
        quantiseTo16Bit(faded(mix(choir(48000, 25, PIECES.lanternCarol), hiss(48000, 7, -60)), 48000)),
        quantiseTo16Bit(faded(mix(choir(48000, 26, PIECES.lanternCarol), hiss(48000, 8, -60)), 48000)),
      ],
    },
    {
      path: `${CHOIR}/LCR-04 vigil.rf64`,
      // The vigil is the evening hymn of reel 1 side A, transferred again at 48 kHz into RF64 and 6 dB lower:
      // the same recording as LCR-01, which the server links as a possible duplicate.
      fault: "none (RF64 container, EBU Tech 3306); a second transfer of LCR-01's evening hymn",
      encode: { sampleRateHz: 48000, bitDepth: 24, rf64: true },
      channels: () => [
        faded(mix(gainDb(choir(48000, 27, PIECES.eveningHymn), -6), hiss(48000, 9)), 48000),
        faded(mix(gainDb(choir(48000, 28, PIECES.eveningHymn), -7), hiss(48000, 10)), 48000),
      ],
    },
  ];
}

/** A basic SMPTE 330M UMID (universal label, length byte 0x13), its material number drawn from the path. */
function demoUmid(seed: string): Uint8Array {
  const u = new Uint8Array(64);
  u.set([0x06, 0x0a, 0x2b, 0x34, 0x01, 0x01, 0x01, 0x05, 0x01, 0x01, 0x0d, 0x20, 0x13], 0);
  let h = 2166136261;
  for (let i = 13; i < 32; i++) {
    for (const ch of `${seed}#${i}`) h = Math.imul(h ^ ch.charCodeAt(0), 16777619);
    u[i] = h & 0xff;
  }
  return u;
}

/**
 * What the archive embeds in every master (FADGI BWF guideline v2's strongly recommended fields, and INFO
 * IARL), so the demo's preservation-master scan shows the planted faults rather than missing metadata.
 * A recipe's own bext wins; the UMID and a CodingHistory row for this file are added where missing.
 */
function withArchiveMetadata(r: Recipe, channels: number): WavEncodeOptions {
  const name = path.basename(r.path).replace(/\.[^.]+$/, "");
  const mode = channels === 1 ? "mono" : channels === 2 ? "stereo" : "multitrack";
  const own = r.encode.bext;
  const bextFields = own ?? {
    description: `${path.dirname(r.path)}: ${name}`,
    originator: "Harbourside Sound Archive",
    originatorReference: `HSA-${name.split(" ")[0]}`,
    originationDate: "2026-01-15",
    originationTime: "10:00:00",
    codingHistory: `A=ANALOGUE,M=${mode},T=quarter-inch tape\r\nA=PCM,F=${r.encode.sampleRateHz},W=${r.encode.bitDepth},M=${mode},T=transfer desk 2\r\n`,
  };
  return {
    ...r.encode,
    bext: { ...bextFields, umid: bextFields.umid ?? demoUmid(r.path), version: bextFields.version ?? 1 },
    info: r.encode.info ?? { IARL: "GB, Harbourside Sound Archive", INAM: name },
  };
}

export function makeDemoArchive(outDir: string, options: { speech?: boolean } = {}): { files: DemoFile[]; speech: boolean } {
  const useSpeech = (options.speech ?? true) && hasEspeak();
  rmSync(path.join(outDir, FERRY), { recursive: true, force: true });
  rmSync(path.join(outDir, CHOIR), { recursive: true, force: true });
  const files: DemoFile[] = [];
  for (const r of recipes()) {
    const target = path.join(outDir, r.path);
    mkdirSync(path.dirname(target), { recursive: true });
    const channels = r.channels(useSpeech);
    writeFileSync(target, encodeWav(channels, withArchiveMetadata(r, channels.length)));
    files.push({ path: r.path, fault: r.fault });
  }
  return { files, speech: useSpeech };
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const args = process.argv.slice(2);
  const outDir = path.resolve(args.find((a) => !a.startsWith("--")) ?? path.join(path.dirname(fileURLToPath(import.meta.url)), "audio", "archive"));
  const { files, speech } = makeDemoArchive(outDir, { speech: !args.includes("--no-speech") });
  console.log(`Harbourside Sound Archive demo: ${files.length} files in ${outDir} (${speech ? "speech from espeak-ng" : "tones and noise"})`);
  for (const f of files) console.log(`  ${f.path}  — ${f.fault}`);
}
