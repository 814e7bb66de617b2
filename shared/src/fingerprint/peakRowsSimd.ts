/**
 * The peak picker's spectrum rows and their ±radius maxima in WebAssembly memory, with the row
 * maxima and the bins that equal them found by kernels.wat's `rowMax` and `candidates` (SIMD, no
 * data-dependent branch a bin), where the JavaScript fallback (slidingMax.ts and a scan of the row)
 * mispredicts a branch at almost every bin of a noise-like spectrum. Same values, same bins.
 */
import { instantiateKernels } from "./wasmKernels.ts";

export interface PeakRowsSimd {
  /** depth rows of `bins` spectrum values, and their ±radius maxima (views into the module's memory). */
  readonly rows: Float32Array;
  readonly rowMax: Float32Array;
  /** Bins found by the last `candidates` call. */
  readonly candidateBins: Int32Array;
  /** Computes rowMax for the row starting at `at` (a multiple of bins); false if the row holds NaN. */
  updateMax(at: number): boolean;
  /** Bins of the row at `at` that equal its maximum and are ≥ floor, into candidateBins; returns how many. */
  candidates(at: number, floor: number): number;
}

const align16 = (n: number): number => (n + 15) & ~15;

export function createPeakRowsSimd(bins: number, depth: number, radius: number): PeakRowsSimd | null {
  const w = 2 * radius + 1;
  const size = align16(bins + 2 * radius); // positions a doubling pass computes, a multiple of 4
  const padded = size + w + 16; // and what its reads past them may reach, all −∞
  const rowsAt = 0;
  const maxAt = align16(rowsAt + 4 * depth * bins);
  const srcAt = align16(maxAt + 4 * depth * bins);
  const workAt = align16(srcAt + 4 * padded);
  const candAt = align16(workAt + 4 * padded);
  const kernels = instantiateKernels(candAt + 4 * bins);
  if (kernels === null) return null;
  const heap = kernels.memory.buffer;
  const rows = new Float32Array(heap, rowsAt, depth * bins);
  const rowMax = new Float32Array(heap, maxAt, depth * bins);
  const src = new Float32Array(heap, srcAt, padded).fill(Number.NEGATIVE_INFINITY);
  new Float32Array(heap, workAt, padded).fill(Number.NEGATIVE_INFINITY);
  const candidateBins = new Int32Array(heap, candAt, bins);

  return {
    rows,
    rowMax,
    candidateBins,
    updateMax(at) {
      src.set(rows.subarray(at, at + bins), radius);
      return kernels.rowMax(srcAt, workAt, maxAt + 4 * at, bins, radius, size) === 1;
    },
    candidates(at, floor) {
      return kernels.candidates(rowsAt + 4 * at, maxAt + 4 * at, bins, floor, candAt);
    },
  };
}
