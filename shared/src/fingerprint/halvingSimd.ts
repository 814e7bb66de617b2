/**
 * The halving stage (halvingStage.ts) with its pairs of inputs halved in WebAssembly SIMD (kernels.wat's
 * `halvePair`, two channels in the two float64 lanes; `halveSingle` for an odd channel), bit-identical
 * to the JavaScript stage: the same float64 operations in the same order, one float32 rounding. The
 * sample an odd-length block leaves over, and the output it completes with the next block, are done here
 * in JavaScript exactly as there. Inputs are copied into the instance's memory a chunk at a time and the
 * outputs copied back, which still costs well under half of the JavaScript loop.
 */
import { checkHalvingOutputs, checkHalvingPush, type HalvingStage } from "./halvingStage.ts";
import { instantiateKernels } from "./wasmKernels.ts";

/** Output pairs handled per call into the module (its memory is sized for this many). */
const CHUNK_PAIRS = 8192;

/** A stage like createHalvingStage's, or null where WebAssembly SIMD is missing. */
export function createSimdHalvingStage(channels: number): HalvingStage | null {
  if (!Number.isInteger(channels) || channels < 1) throw new RangeError(`channels must be an integer ≥ 1, got ${channels}`);
  const groups = Math.ceil(channels / 2);
  // Per group of two channels, 32 bytes of state: float64 b (first, second channel), then c.
  const stateAt = 0;
  const inAt = 32 * groups;
  const outAt = inAt + 8 * CHUNK_PAIRS * channels;
  const kernels = instantiateKernels(outAt + 4 * CHUNK_PAIRS * channels);
  if (kernels === null) return null;
  const heap = kernels.memory.buffer;
  const state = new Float64Array(heap, stateAt, 4 * groups);
  const inViews = Array.from({ length: channels }, (_, ch) => new Float32Array(heap, inAt + 8 * CHUNK_PAIRS * ch, 2 * CHUNK_PAIRS));
  const outViews = Array.from({ length: channels }, (_, ch) => new Float32Array(heap, outAt + 4 * CHUNK_PAIRS * ch, CHUNK_PAIRS));
  // The stage's three newest inputs a, b, c per channel: b and c in the module's state, a here.
  const olderA = new Float64Array(channels);
  const bAt = (ch: number): number => 4 * (ch >> 1) + (ch & 1);
  const cAt = (ch: number): number => bAt(ch) + 2;
  let odd = false;
  let ended = false;

  return {
    channels,
    push(inputs, count, outputs) {
      const written = checkHalvingPush(channels, ended, odd, inputs, count, outputs);
      let i = 0;
      let n = 0;
      if (odd && count > 0) {
        for (let ch = 0; ch < channels; ch++) {
          const e = inputs[ch][0];
          const a = olderA[ch];
          const b = state[bAt(ch)];
          const c = state[cAt(ch)];
          outputs[ch][0] = (a + 3 * (b + c) + e) * 0.125;
          olderA[ch] = b;
          state[bAt(ch)] = c;
          state[cAt(ch)] = e;
        }
        i = 1;
        n = 1;
      }
      const pairs = Math.floor((count - i) / 2);
      for (let p0 = 0; p0 < pairs; p0 += CHUNK_PAIRS) {
        const np = Math.min(CHUNK_PAIRS, pairs - p0);
        const from = i + 2 * p0;
        for (let ch = 0; ch < channels; ch++) {
          // a is not tracked through the pairs: only a leftover sample (below) makes the next push
          // start odd, and it sets a first.
          inViews[ch].set(inputs[ch].subarray(from, from + 2 * np));
        }
        let ch = 0;
        for (; ch + 1 < channels; ch += 2) {
          kernels.halvePair(inAt + 8 * CHUNK_PAIRS * ch, inAt + 8 * CHUNK_PAIRS * (ch + 1), np, outAt + 4 * CHUNK_PAIRS * ch, outAt + 4 * CHUNK_PAIRS * (ch + 1), stateAt + 32 * (ch >> 1));
        }
        if (ch < channels) kernels.halveSingle(inAt + 8 * CHUNK_PAIRS * ch, np, outAt + 4 * CHUNK_PAIRS * ch, stateAt + 32 * (ch >> 1));
        for (let c = 0; c < channels; c++) outputs[c].set(outViews[c].subarray(0, np), n + p0);
      }
      i += 2 * pairs;
      if (i < count) {
        for (let ch = 0; ch < channels; ch++) {
          olderA[ch] = state[bAt(ch)];
          state[bAt(ch)] = state[cAt(ch)];
          state[cAt(ch)] = inputs[ch][i];
        }
      }
      odd = (odd ? 1 : 0) + (count % 2) === 1;
      return written;
    },
    end(outputs) {
      if (ended) return 0;
      ended = true;
      if (!odd) return 0;
      checkHalvingOutputs(channels, outputs, 1);
      for (let ch = 0; ch < channels; ch++) outputs[ch][0] = (olderA[ch] + 3 * (state[bAt(ch)] + state[cAt(ch)])) * 0.125;
      return 1;
    },
  };
}
