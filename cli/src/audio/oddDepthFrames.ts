/**
 * libFLAC frames for depths its WebAssembly build does not hand out (anything but 8, 16, 24 and 32 bits: a 12-
 * or 20-bit FLAC came out as ±Infinity, see flacStreamDecoder.ts). Each frame is rewritten at the next of those
 * depths by shared/src/flac/flacDepthWidening.ts (the samples come out shifted left by the difference), and the
 * output is put back on the stream's own depth in place, so the caller sees exactly what libFLAC hands out for a
 * native depth: samples divided by 2^(bps−1) − 1. Only odd-depth streams pay for this.
 */
import { createFrameWidener, widenStreamHeader } from "@tidemark/shared/flac/flacDepthWidening";
import type { FlacStreamInfo } from "@tidemark/shared/flac/flacLayout";
import type { DecodedFrame, LibflacFrames } from "./libflacFrames.ts";

const EMPTY = new Float32Array(0);

export function wrapOddDepthFrames(inner: LibflacFrames, info: FlacStreamInfo): LibflacFrames {
  const widener = createFrameWidener(info);
  const container = widener.container;
  const bps = info.bitsPerSample;
  const shift = container - bps;
  const containerScale = 2 ** (container - 1) - 1;
  const offset = 2 ** (container - 1);
  const bias = offset + 0.5;
  const target = 1 / (2 ** (bps - 1) - 1);
  // Above 24 bits libFLAC's float32 is not exact anyway (see flacStreamDecoder.ts): one factor, no rounding.
  const factor = containerScale / (2 ** shift * (2 ** (bps - 1) - 1));
  const failed: DecodedFrame = { samples: 0, channels: info.channels, data: EMPTY, error: null };
  let header: Uint8Array | null = null;

  const restore = (data: Float32Array, length: number): void => {
    if (container > 24) {
      for (let i = 0; i < length; i++) data[i] *= factor;
      return;
    }
    // Exact: every value is within 1e-6 of an integer code at the container depth, whose low `shift` bits are 0.
    for (let i = 0; i < length; i++) data[i] = ((((data[i] * containerScale + bias) | 0) - offset) >> shift) * target;
  };

  return {
    decode(frame) {
      const isStreamHeader = frame.length >= 4 && frame[0] === 0x66 && frame[1] === 0x4c && frame[2] === 0x61 && frame[3] === 0x43;
      if (isStreamHeader) {
        header ??= widenStreamHeader(frame, container);
        return inner.decode(header);
      }
      const widened = widener.widen(frame);
      if (typeof widened === "string") {
        failed.error = `frame not rewritten from ${bps} to ${container} bits for the decoder: ${widened}`;
        return failed;
      }
      const decoded = inner.decode(widened);
      restore(decoded.data, Math.min(decoded.data.length, decoded.samples * decoded.channels));
      return decoded;
    },
    restart: () => inner.restart(),
    free: () => inner.free(),
  };
}
