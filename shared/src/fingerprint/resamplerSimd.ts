/**
 * The fingerprint resampler's loops in WebAssembly SIMD (kernels.wat), about three times faster
 * than the JavaScript loop and bit-identical to it (see the .wat's header), so stored fingerprints
 * stay valid. The resampler (resampler.ts) keeps its state and its JavaScript loop; this store holds
 * the channel buffers, the kernel and the schedule in the instance's memory and runs the loops. Where WebAssembly SIMD is missing, `createSimdResampleStore`
 * returns null and the resampler keeps its JavaScript loop.
 */
import { instantiateKernels, type FingerprintKernels } from "./wasmKernels.ts";

/** Outputs scheduled per call into the module. */
export const SIMD_SCHEDULE_OUTPUTS = 4096;

export interface SimdResampleStore {
  readonly channels: number;
  /** Samples each channel buffer holds. */
  readonly capacity: number;
  /** Channel buffers in the module's memory: replaced by grow() (the old ones stay readable), so read them afresh after it. */
  readonly buffers: readonly Float32Array[];
  /**
   * Schedules up to min(`capacity`, SIMD_SCHEDULE_OUTPUTS) outputs from output number `index` on, as
   * the resampler's JavaScript loop would pick them (kernels.wat's `plan`); returns how many.
   * `origin` is the input index at the buffers' start, `available` one past the last buffered input.
   */
  plan(p: { index: number; ratio: number; limit: number; origin: number; available: number; lead: number; phases: number; capacity: number }): number;
  /** Makes every buffer hold at least `size` samples, keeping the first `keep` of each. */
  grow(size: number, keep: number): void;
  /** Computes the first `count` scheduled outputs of every channel into outs[c][at, at + count). */
  run(count: number, outs: readonly Float32Array[], at: number): void;
}

const align16 = (n: number): number => (n + 15) & ~15;

export function createSimdResampleStore(table: Float32Array, taps: number, channels: number, initialCapacity: number): SimdResampleStore | null {
  if (taps < 2 || taps % 2 !== 0) throw new RangeError(`SIMD resampler: taps must be even and ≥ 2, got ${taps}`);
  const tableAt = 0;
  const scheduleAt = align16(tableAt + 4 * table.length);
  const outsAt = align16(scheduleAt + 8 * SIMD_SCHEDULE_OUTPUTS);
  const buffersAt = align16(outsAt + 4 * SIMD_SCHEDULE_OUTPUTS * channels);
  let capacity = 0;
  let kernel: FingerprintKernels | null = null;
  let buffers: Float32Array[] = [];
  let outViews: Float32Array[] = [];

  /** A new instance whose buffers hold `newCapacity` samples (its memory is made at that size, never grown). */
  function layout(newCapacity: number): boolean {
    const next = instantiateKernels(buffersAt + 4 * newCapacity * channels);
    if (next === null) return false;
    kernel = next;
    capacity = newCapacity;
    const heap = next.memory.buffer;
    new Float32Array(heap, tableAt, table.length).set(table);
    buffers = Array.from({ length: channels }, (_, c) => new Float32Array(heap, buffersAt + 4 * capacity * c, capacity));
    outViews = Array.from({ length: channels }, (_, c) => new Float32Array(heap, outsAt + 4 * SIMD_SCHEDULE_OUTPUTS * c, SIMD_SCHEDULE_OUTPUTS));
    return true;
  }

  if (!layout(align16(Math.max(16, initialCapacity)))) return null;

  return {
    channels,
    get capacity() {
      return capacity;
    },
    get buffers() {
      return buffers;
    },
    plan(p) {
      const capacity = Math.min(p.capacity, SIMD_SCHEDULE_OUTPUTS);
      return kernel!.plan(p.index, p.ratio, p.limit, p.origin, p.available, p.lead, taps, p.phases, scheduleAt, capacity);
    },
    grow(size, keep) {
      if (size <= capacity) return;
      const old = buffers;
      layout(align16(Math.max(2 * capacity, size)));
      for (let c = 0; c < channels; c++) buffers[c].set(old[c].subarray(0, Math.min(keep, old[c].length)));
    },
    run(count, outs, at) {
      if (count <= 0) return;
      if (count > SIMD_SCHEDULE_OUTPUTS) throw new RangeError(`SIMD resampler: at most ${SIMD_SCHEDULE_OUTPUTS} outputs a run, got ${count}`);
      const bufferBytes = 4 * capacity;
      const outBytes = 4 * SIMD_SCHEDULE_OUTPUTS;
      let c = 0;
      for (; c + 1 < channels; c += 2) {
        kernel!.pair(buffersAt + bufferBytes * c, buffersAt + bufferBytes * (c + 1), tableAt, scheduleAt, count, outsAt + outBytes * c, outsAt + outBytes * (c + 1), taps);
      }
      if (c < channels) kernel!.single(buffersAt + bufferBytes * c, tableAt, scheduleAt, count, outsAt + outBytes * c, taps);
      for (let ch = 0; ch < channels; ch++) outs[ch].set(outViews[ch].subarray(0, count), at);
    },
  };
}
