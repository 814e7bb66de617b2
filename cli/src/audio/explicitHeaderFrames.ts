/**
 * libFLAC frames whose headers always state their own sample rate and depth (shared/src/flac/flacExplicitHeader.ts):
 * libFLAC's WebAssembly build is never given STREAMINFO, after which it faulted (see that module), so a frame
 * that leaves its rate or depth to STREAMINFO (code 0) is rewritten to say them. The innermost wrapper: odd-depth
 * frames (oddDepthFrames.ts) reach it already rewritten at their container depth.
 */
import { createExplicitHeaders } from "@tidemark/shared/flac/flacExplicitHeader";
import type { FlacStreamInfo } from "@tidemark/shared/flac/flacLayout";
import type { LibflacFrames } from "./libflacFrames.ts";

/** `depth`: the depth the frames reach libFLAC at (the stream's, or the container depth of an odd-depth stream). */
export function withExplicitHeaders(inner: LibflacFrames, info: FlacStreamInfo, depth: number): LibflacFrames {
  const headers = createExplicitHeaders({ sampleRateHz: info.sampleRateHz, bitsPerSample: depth });
  return {
    decode: (frame) => inner.decode(headers.explicit(frame)),
    restart: () => inner.restart(),
    free: () => inner.free(),
  };
}
