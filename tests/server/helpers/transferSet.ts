/**
 * A small synthesised day of transfers for the distributed-scanning tests: distinct tones over seeded
 * noise (no two files alike), in two reel folders, some with deliberate faults (clipping, mains hum, a
 * silent lead-in, a 16-bit mono access copy) so verdicts and findings vary from file to file.
 */
import { mkdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import { concat, gainDb, hardClip, mix, pinkNoise, silence, sine } from "../../fixtures/synth.ts";
import { encodeWav } from "../../fixtures/wavWriter.ts";

export function writeTransferSet(dir: string, count: number, seconds: number): string[] {
  const written: string[] = [];
  for (let i = 0; i < count; i++) {
    const kind = i % 8;
    const sampleRateHz = kind === 5 ? 44_100 : 48_000;
    let signal = mix(
      sine({ frequencyHz: 180 + 41 * i, sampleRateHz, seconds, peakDbfs: -14 }),
      pinkNoise({ sampleRateHz, seconds, rmsDbfs: -42, seed: 1000 + i }),
    );
    if (kind === 1) signal = hardClip(gainDb(signal, 16));
    if (kind === 3) signal = mix(signal, sine({ frequencyHz: 50, sampleRateHz, seconds, peakDbfs: -26 }));
    if (kind === 7) signal = concat(silence({ sampleRateHz, seconds: 3 }), signal.subarray(0, signal.length - 3 * sampleRateHz));
    const rel = `reel-${i < count / 2 ? "a" : "b"}/take-${String(i + 1).padStart(2, "0")}.wav`;
    const file = path.join(dir, rel);
    mkdirSync(path.dirname(file), { recursive: true });
    const channels = kind === 5 ? [signal] : [signal, gainDb(signal, -1)];
    writeFileSync(file, encodeWav(channels, { sampleRateHz, bitDepth: kind === 5 ? 16 : 24 }));
    written.push(rel);
  }
  return written;
}
