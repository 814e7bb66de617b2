/**
 * Plants findings into a file written by synthWav (plain RIFF, 44-byte header): runs of digital zero in
 * every channel, each a `dropout` finding for the scan, spread evenly so each gets a close-up of its own.
 */
import { open } from "node:fs/promises";

const RIFF_HEADER_BYTES = 44;

export async function plantDropouts(o: { path: string; seconds: number; sampleRateHz: number; channels: number; bitDepth: number; count: number; dropoutSeconds: number }): Promise<number[]> {
  const frameBytes = o.channels * (o.bitDepth / 8);
  const frames = Math.round(o.dropoutSeconds * o.sampleRateHz);
  const zeros = new Uint8Array(frames * frameBytes);
  const at: number[] = [];
  const file = await open(o.path, "r+");
  try {
    for (let i = 0; i < o.count; i++) {
      const seconds = ((i + 0.5) * o.seconds) / o.count;
      await file.write(zeros, 0, zeros.length, RIFF_HEADER_BYTES + Math.round(seconds * o.sampleRateHz) * frameBytes);
      at.push(seconds);
    }
  } finally {
    await file.close();
  }
  return at;
}
