/**
 * The spectrogram accumulator's WebAssembly kernels (gridKernels.wat, built into gridKernels.generated.ts),
 * loaded through shared/src/wasm/kernelModule.ts: an instance per accumulator, whose memory also holds its
 * powers. Null where WebAssembly is missing; the accumulator then runs its JavaScript loops, which give the
 * same grid bit for bit (tests/shared/spectrogramGrid.test.ts).
 */
import { kernelModule, type WasmMemory } from "../wasm/kernelModule.ts";
import { WASM_MODULE_BYTES } from "./gridKernels.generated.ts";

export interface GridKernels {
  /** At least the bytes asked for, never grown: views into it stay valid. */
  readonly memory: WasmMemory;
  /** See gridKernels.wat. Arguments are byte offsets into `memory`, except counts and powerScale. */
  rows(spectrum: number, n: number, firstBin: number, binCount: number, fraction: number, powerScale: number, out: number): void;
  max(column: number, rows: number, n: number): void;
  add(column: number, rows: number, n: number): void;
}

const instantiate = kernelModule(WASM_MODULE_BYTES);

/** A fresh instance whose memory holds at least `bytes`, or null where this runtime cannot run the module. */
export function createGridKernels(bytes: number): GridKernels | null {
  const instance = instantiate(bytes);
  if (!instance) return null;
  return { ...(instance.exports as unknown as Omit<GridKernels, "memory">), memory: instance.memory };
}
