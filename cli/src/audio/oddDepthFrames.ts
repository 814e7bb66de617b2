/**
 * libFLAC frames for depths its WebAssembly build does not hand out (anything but 8, 16, 24 and 32 bits: a 12-
 * or 20-bit FLAC came out as ±Infinity, see flacStreamDecoder.ts). Each frame is rewritten at the next of those
 * depths by shared/src/flac/flacDepthWidening.ts (the samples come out shifted left by the difference), and the
 * output is put back on the stream's own depth in place, so the caller sees exactly what libFLAC hands out for a
 * native depth: samples divided by 2^(bps−1) − 1. Only odd-depth streams pay for this. A rewritten frame states its
 * depth; one that leaves its rate to STREAMINFO gets a stated rate from explicitHeaderFrames.ts, which this wraps.
 */
import { createFrameWidener } from "@tidemark/shared/flac/flacDepthWidening";
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
  // Above 24 bits libFLAC's float32 is not exact anyway (see flacStreamDecoder.ts): one factor, no rounding
  // (mid/side frames are then off by up to half a step at the stream's depth, below float32's resolution).
  const factor = containerScale / (2 ** shift * (2 ** (bps - 1) - 1));
  const failed: DecodedFrame = { samples: 0, channels: info.channels, data: EMPTY, error: null };

  const restore = (data: Float32Array, length: number): void => {
    if (container > 24) {
      for (let i = 0; i < length; i++) data[i] *= factor;
      return;
    }
    // Every value is within 1e-6 of an integer code at the container depth (rounded by a bias and |0, as in
    // flacStreamDecoder.ts). Its low `shift` bits are 0, except in mid/side frames: libFLAC rebuilds the mid
    // channel's lost low bit from the side channel's lowest bit (RFC 9639, 4.2: mid = (mid << 1) | (side & 1)),
    // which the shift has made 0, so it gives 2^(shift−1)·(2M + S) where the stream's depth gives
    // ceil((2M + S) / 2). Dividing by 2^shift rounding up is exact for both: −((−v) >> shift).
    for (let i = 0; i < length; i++) data[i] = -((offset - ((data[i] * containerScale + bias) | 0)) >> shift) * target;
  };

  return {
    decode(frame) {
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
