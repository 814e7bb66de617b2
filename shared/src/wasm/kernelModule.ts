/**
 * The one loader of the project's WebAssembly kernels (each `.wat` under shared/src, built into the
 * `.generated.ts` beside it by scripts/generate-wasm-kernels.ts). A module is compiled once per process; each
 * user makes its own instance with an imported memory made at the size it asks for and never grown:
 * memory.grow() detaches the old buffer, and the first detached ArrayBuffer in a process makes V8 check every
 * typed-array access of all later optimised code for detachment (about 10 % on the whole analysis, measured
 * on the level side). A user that needs more memory makes a new instance. Null where this runtime cannot run
 * the module (no WebAssembly or no SIMD, a content security policy without 'wasm-unsafe-eval', no address
 * space left for another memory): the callers' JavaScript loops give the same results, only slower.
 */

// shared/ is built without DOM or Node typings: just what is used of the WebAssembly global.
export interface WasmMemory {
  /** Never grown, so views into it stay valid for the instance's life. */
  readonly buffer: ArrayBuffer;
}
interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports?: object) => { exports: Record<string, unknown> };
  Memory: new (descriptor: { initial: number }) => WasmMemory;
}

export const WASM_PAGE_BYTES = 65536;

export interface KernelInstance {
  readonly memory: WasmMemory;
  readonly exports: Record<string, unknown>;
}

/** Instantiates the module with a fresh memory of at least `memoryBytes` (one page at least), or null. */
export type KernelInstantiator = (memoryBytes: number) => KernelInstance | null;

/**
 * The instantiator of one generated module (its `WASM_MODULE_BYTES`). Compiles on first use; the module
 * must import its memory as `env.memory` (the generator's test checks every .wat does).
 */
export function kernelModule(bytes: Uint8Array): KernelInstantiator {
  let compiled: object | null | undefined;
  return (memoryBytes) => {
    const api = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
    if (!api) return null;
    try {
      if (compiled === undefined) compiled = api.validate(bytes) ? new api.Module(bytes) : null;
      if (compiled === null) return null;
      const memory = new api.Memory({ initial: Math.max(1, Math.ceil(memoryBytes / WASM_PAGE_BYTES)) });
      return { memory, exports: new api.Instance(compiled, { env: { memory } }).exports };
    } catch {
      // Compilation refused (policy) stays refused; an instance that found no address space may be retried.
      if (compiled === undefined) compiled = null;
      return null;
    }
  };
}
