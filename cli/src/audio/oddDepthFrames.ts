/**
 * libFLAC frames for depths a frame header cannot state as we hand them to libFLAC (anything but 8, 16, 24 and
 * 32 bits, see flacStreamDecoder.ts). Each frame is rewritten at the next of those depths by
 * shared/src/flac/flacDepthWidening.ts (the codes come out shifted left by the difference), and the codes are
 * shifted back in place, so the caller sees the stream's own codes. Only odd-depth streams pay for this. A
 * rewritten frame states its depth; one that leaves its rate to STREAMINFO gets a stated rate from
 * explicitHeaderFrames.ts, which this wraps.
 */
import { createFrameWidener } from "@tidemark/shared/flac/flacDepthWidening";
import type { FlacStreamInfo } from "@tidemark/shared/flac/flacLayout";
import type { DecodedFrame, LibflacFrames } from "./libflacFrames.ts";

export function wrapOddDepthFrames(inner: LibflacFrames, info: FlacStreamInfo): LibflacFrames {
  const widener = createFrameWidener(info);
  const bps = info.bitsPerSample;
  const shift = widener.container - bps;
  const round = (1 << shift) - 1;
  const failed: DecodedFrame = { samples: 0, channels: info.channels, codes: new Int32Array(0), offsets: [], error: null };

  return {
    decode(frame) {
      const widened = widener.widen(frame);
      if (typeof widened === "string") {
        failed.error = `frame not rewritten from ${bps} to ${widener.container} bits for the decoder: ${widened}`;
        return failed;
      }
      const decoded = inner.decode(widened);
      // Each code's low `shift` bits are 0, except in mid/side frames: libFLAC rebuilds the mid channel's lost
      // low bit from the side channel's lowest bit (RFC 9639, 4.2: mid = (mid << 1) | (side & 1)), which the
      // shift has made 0, so it gives 2^(shift−1)·(2M + S) where the stream's depth gives ceil((2M + S) / 2).
      // Dividing by 2^shift rounding up is exact for both; the sum stays below 2^31 (the largest code is
      // 2^31 − 2^shift).
      const { codes, offsets, samples } = decoded;
      for (let c = 0; c < decoded.channels; c++) {
        for (let i = offsets[c], end = offsets[c] + samples; i < end; i++) codes[i] = (codes[i] + round) >> shift;
      }
      return decoded;
    },
    restart: () => inner.restart(),
    free: () => inner.free(),
  };
}
