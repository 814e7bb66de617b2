/**
 * The one loader of the project's WebAssembly kernels (each `.wat` under shared/src, built into the
 * `.generated.ts` beside it by scripts/generate-wasm-kernels.ts). A module is compiled once per process; each
 * user makes its own instance with an imported memory made at the size it asks for and never grown:
 * memory.grow() detaches the old buffer, and the first detached ArrayBuffer in a process makes V8 check every
 * typed-array access of all later optimised code for detachment (about 10 % on the whole analysis, measured
 * on the level side). A user that needs more memory makes a new instance. Null where this runtime cannot run
 * the module (no WebAssembly or no SIMD, a content security policy without 'wasm-unsafe-eval', no address
 * space left for another memory): the callers' JavaScript loops give the same results, only slower.
 *
 * A shell measuring many short files runs each file's pass inside a `KernelArena` (issue #22): the
 * instances made within it go back to their module's pool when the arena is released, and a later instance
 * of the same memory size is taken from there, its memory zeroed, as good as a fresh one (the modules keep no
 * state outside their memory: no globals). Making seven instances and memories a file was a fifth of a 1 s
 * file's time. Outside an arena every instance is fresh, as before.
 */

// shared/ is built without DOM or Node typings: just what is used of the WebAssembly global.
export interface WasmMemory {
  /** Never grown, so views into it stay valid for the instance's life. */
  readonly buffer: ArrayBuffer;
}
interface WasmApi {
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports?: object) => { exports: Record<string, unknown> };
  Memory: new (descriptor: { initial: number }) => WasmMemory;
}

export const WASM_PAGE_BYTES = 65536;

export interface KernelInstance {
  readonly memory: WasmMemory;
  readonly exports: Record<string, unknown>;
}

/**
 * Instantiates the module with a fresh memory of at least `memoryBytes` (one page at least), or null.
 * `on(memory)` instead instantiates it on a memory made elsewhere (createKernelMemory), which instances of
 * other modules may share: an image's pixels, painted by one module and filtered for PNG by another, then
 * stay in one memory and are never copied between them (issue #22). One instance per memory, kept with it.
 */
export interface KernelInstantiator {
  (memoryBytes: number): KernelInstance | null;
  on(memory: WasmMemory): KernelInstance | null;
}

/**
 * A memory of at least `bytes` for kernel instances to share (`instantiator.on(memory)`), or null where
 * this runtime has no WebAssembly or no address space left for it. Never grown, like every kernel memory.
 */
export function createKernelMemory(bytes: number): WasmMemory | null {
  const api = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
  if (!api) return null;
  try {
    return new api.Memory({ initial: Math.max(1, Math.ceil(bytes / WASM_PAGE_BYTES)) });
  } catch {
    return null;
  }
}

/** Instances a module keeps for reuse, per memory size, and in all (bytes): a 1 s stereo file uses 1.7 MB in all modules, so this holds a worker's two files and more, and keeps a long scan's idle memories small. */
const POOLED_PER_SIZE = 4;
const POOLED_BYTES_PER_MODULE = 16 * 1024 * 1024;

interface Pool {
  /** Free instances by memory pages. */
  free: Map<number, KernelInstance[]>;
  /** Instances in `free`, so one handed back twice is pooled once. */
  held: Set<KernelInstance>;
  bytes: number;
}

/** Where an arena's instances go back to, by instance. */
const poolOf = new WeakMap<KernelInstance, Pool>();

/**
 * The instances made while `run` runs, handed back for reuse by `release()`. Only for a caller that knows
 * every user of them is done by then: nothing may read or call an instance after its arena is released.
 */
export interface KernelArena {
  /** Runs fn with this arena current (synchronously; arenas nest). */
  run<T>(fn: () => T): T;
  /** Hands every instance made within the arena back to its module's pool. Once; later runs make fresh ones. */
  release(): void;
}

let currentArena: { instances: KernelInstance[]; released: boolean } | null = null;

export function createKernelArena(): KernelArena {
  const arena = { instances: [] as KernelInstance[], released: false };
  return {
    run(fn) {
      const outer = currentArena;
      currentArena = arena.released ? null : arena;
      try {
        return fn();
      } finally {
        currentArena = outer;
      }
    },
    release() {
      if (arena.released) return;
      arena.released = true;
      for (const instance of arena.instances.splice(0)) {
        const pool = poolOf.get(instance);
        if (!pool || pool.held.has(instance)) continue;
        const pages = instance.memory.buffer.byteLength / WASM_PAGE_BYTES;
        const free = pool.free.get(pages) ?? [];
        if (free.length >= POOLED_PER_SIZE || pool.bytes + instance.memory.buffer.byteLength > POOLED_BYTES_PER_MODULE) continue;
        free.push(instance);
        pool.free.set(pages, free);
        pool.held.add(instance);
        pool.bytes += instance.memory.buffer.byteLength;
      }
    },
  };
}

/**
 * The instantiator of one generated module (its `WASM_MODULE_BYTES`). Compiles on first use; the module
 * must import its memory as `env.memory` (the generator's test checks every .wat does).
 */
export function kernelModule(bytes: Uint8Array): KernelInstantiator {
  let compiled: object | null | undefined;
  const pool: Pool = { free: new Map(), held: new Set(), bytes: 0 };
  const onMemory = new WeakMap<WasmMemory, KernelInstance>();
  const compile = (api: WasmApi): object | null => {
    // No validate() first: compiling validates too, and throws for a module this runtime cannot run (no SIMD).
    if (compiled === undefined) {
      try {
        compiled = new api.Module(bytes);
      } catch {
        compiled = null;
      }
    }
    return compiled;
  };
  const instantiate = (memoryBytes: number): KernelInstance | null => {
    const api = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
    if (!api) return null;
    try {
      const module = compile(api);
      if (module === null) return null;
      const pages = Math.max(1, Math.ceil(memoryBytes / WASM_PAGE_BYTES));
      const arena = currentArena;
      if (arena === null) {
        const memory = new api.Memory({ initial: pages });
        return { memory, exports: new api.Instance(module, { env: { memory } }).exports };
      }
      let instance = pool.free.get(pages)?.pop();
      if (instance) {
        pool.held.delete(instance);
        pool.bytes -= instance.memory.buffer.byteLength;
        // As a fresh memory is.
        new Uint8Array(instance.memory.buffer).fill(0);
      } else {
        const memory = new api.Memory({ initial: pages });
        instance = { memory, exports: new api.Instance(module, { env: { memory } }).exports };
        poolOf.set(instance, pool);
      }
      arena.instances.push(instance);
      return instance;
    } catch {
      // Compilation refused (policy) stays refused (compile()); an instance that found no address space may be retried.
      return null;
    }
  };
  const on = (memory: WasmMemory): KernelInstance | null => {
    const known = onMemory.get(memory);
    if (known) return known;
    const api = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
    if (!api) return null;
    try {
      const module = compile(api);
      if (module === null) return null;
      const instance = { memory, exports: new api.Instance(module, { env: { memory } }).exports };
      onMemory.set(memory, instance);
      return instance;
    } catch {
      return null;
    }
  };
  return Object.assign(instantiate, { on });
}
