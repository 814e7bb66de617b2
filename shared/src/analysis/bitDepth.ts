/**
 * Effective bit depth of integer PCM: the bits actually used, i.e. the container depth minus the low bits
 * that are zero in every sample (a 24-bit file whose low 8 bits never change carries 16-bit content).
 * Each sample is rescaled to its integer code and OR-ed into one word; scanning stops once bit 0 is set.
 * Float and G.711 data have no fixed linear quantisation: null.
 */
import type { StreamFormat } from "../types/analysis.ts";
import type { Finding } from "../types/report.ts";

export interface BitDepthMeter {
  push(input: Float32Array[], frames: number): void;
  /** Bits used (0 for all-zero audio), or null for float formats. */
  finish(): number | null;
}

export function createBitDepthMeter(format: Pick<StreamFormat, "encoding" | "bitDepth" | "channels">): BitDepthMeter {
  // Float and companded (A-law/µ-law) data have no fixed linear quantisation step to count.
  if (format.encoding !== "pcm") return { push: () => undefined, finish: () => null };
  const scale = 2 ** (format.bitDepth - 1);
  let used = 0;
  let isDone = false;
  return {
    push(input, frames) {
      if (isDone) return;
      let bits = used;
      for (let c = 0; c < format.channels; c++) {
        const x = input[c];
        // Codes are exact in float32 up to 24 bits; 32-bit codes round, which only ever sets bits.
        for (let i = 0; i < frames; i++) bits |= x[i] * scale;
        if (bits & 1) break;
      }
      used = bits;
      isDone = (bits & 1) === 1;
    },
    finish() {
      if (used === 0) return 0;
      let trailingZeros = 0;
      while (((used >>> trailingZeros) & 1) === 0) trailingZeros++;
      return format.bitDepth - trailingZeros;
    },
  };
}

export function paddedBitDepthFinding(effectiveBits: number | null, containerBits: number, durationSeconds: number): Finding | null {
  if (effectiveBits === null || effectiveBits === 0 || effectiveBits >= containerBits) return null;
  return {
    code: "padded-bit-depth",
    severity: "warn",
    channel: null,
    startSeconds: 0,
    endSeconds: durationSeconds,
    message: `${containerBits}-bit container carries ${effectiveBits}-bit content: the low ${containerBits - effectiveBits} bits are zero in every sample`,
  };
}
