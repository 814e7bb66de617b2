/**
 * The audio decimated to ≈ 6 kHz, computed once and read by every low-frequency analysis (the fine rows
 * of the spectrogram, the fine spectrum behind hum and the low bands). At that rate a 4096-point frame
 * resolves 1.5 Hz whatever the file's rate, where the full-rate frame would need 32768 points at
 * 48 kHz and 262144 at 384 kHz. Only the samples some consumer's next frame needs are decimated.
 */
import type { AudioBlock } from "../types/analysis.ts";
import { createDecimator } from "./decimator.ts";
import type { FrameCollector } from "./frameCollector.ts";

/** Decimated rate aimed at: the nearest power-of-two factor gets within √2 of it. */
const LOW_RATE_TARGET_HZ = 6000;

export function lowRateFactor(sampleRateHz: number): number {
  return 2 ** Math.max(0, Math.round(Math.log2(sampleRateHz / LOW_RATE_TARGET_HZ)));
}

export interface LowRateStream {
  push(block: AudioBlock): void;
}

export function createLowRateStream(o: { channels: number; factor: number; consumers: FrameCollector[] }): LowRateStream {
  const decimator = createDecimator({ channels: o.channels, factor: o.factor });
  const { consumers } = o;
  const forward = (out: AudioBlock): void => {
    for (const c of consumers) c.push(out);
  };
  return {
    push(block) {
      const { endOutput } = decimator.stage(block);
      // Compute only what some consumer's current frame needs, one stretch at a time: a stretch ends
      // where the first consumer completes its frame (it may then skip ahead).
      for (;;) {
        let from = Infinity;
        let to = Infinity;
        for (const c of consumers) {
          from = Math.min(from, c.nextNeededSample());
          to = Math.min(to, c.nextFrameEnd());
        }
        if (from >= endOutput) return;
        decimator.compute(from, Math.min(to, endOutput), forward);
        if (to >= endOutput) return;
      }
    },
  };
}
