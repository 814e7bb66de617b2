/**
 * The one build and the one loader of the WebAssembly kernels. Every .wat under shared/src must have its
 * generated module beside it, equal to what wabt (the WebAssembly Binary Toolkit's npm build, an independent
 * assembler) makes of the .wat as it stands (else run scripts/generate-wasm-kernels.ts), and must import its
 * memory, so the loader can make it at full size and never grow it (a grown memory detaches its buffer); the
 * one exception, libflacWriteHook.wat, has no memory at all.
 */
import { readFileSync } from "node:fs";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { afterEach, describe, expect, it, vi } from "vitest";
import { createKernelArena, kernelModule, WASM_PAGE_BYTES } from "../../shared/src/wasm/kernelModule.ts";
import { projectRoot } from "../../scripts/lib/paths.ts";
import { generatedKernelText, wasmKernelSources } from "../../scripts/lib/wasmKernels.ts";

const sources = wasmKernelSources();
/** Modules that only give a JavaScript function a WebAssembly face (for a function table): no memory to import. */
const HOST_FACES = new Set(["shared/src/flac/libflacWriteHook.wat"]);

async function generatedBytes(generated: string): Promise<Uint8Array> {
  const module = (await import(pathToFileURL(path.join(projectRoot, generated)).href)) as { WASM_MODULE_BYTES: Uint8Array };
  return module.WASM_MODULE_BYTES;
}

describe("WebAssembly kernel modules", () => {
  it("finds the level, fingerprint and FLAC rescaling kernels", () => {
    expect(sources.map((s) => s.wat)).toEqual(expect.arrayContaining(["shared/src/analysis/levelKernels.wat", "shared/src/fingerprint/kernels.wat", "shared/src/flac/flacRescale.wat"]));
  });

  for (const source of sources) {
    it(`${source.generated} is ${source.wat} as it stands (else run scripts/generate-wasm-kernels.ts)`, async () => {
      expect(readFileSync(path.join(projectRoot, source.generated), "utf8")).toBe(await generatedKernelText(source));
    });

    // A reused instance is as good as a fresh one only if everything it keeps is in its memory (zeroed on reuse).
    it(`${source.wat} keeps no state outside its memory (no globals, tables or data segments)`, () => {
      const text = readFileSync(path.join(projectRoot, source.wat), "utf8").replace(/;;.*$/gm, "");
      expect(text).not.toMatch(/\((global|table|data|elem)\b/);
    });

    if (HOST_FACES.has(source.wat)) {
      it(`${source.wat} (a WebAssembly face for a JavaScript function) imports and exports one function, no memory`, async () => {
        const module = new WebAssembly.Module((await generatedBytes(source.generated)) as Uint8Array<ArrayBuffer>);
        expect(WebAssembly.Module.imports(module).map((i) => i.kind)).toEqual(["function"]);
        expect(WebAssembly.Module.exports(module).map((e) => e.kind)).toEqual(["function"]);
      });
      continue;
    }

    it(`${source.wat} imports its memory as env.memory and exports none`, async () => {
      const module = new WebAssembly.Module((await generatedBytes(source.generated)) as Uint8Array<ArrayBuffer>);
      expect(WebAssembly.Module.imports(module)).toContainEqual({ module: "env", name: "memory", kind: "memory" });
      expect(WebAssembly.Module.exports(module).filter((e) => e.kind === "memory")).toEqual([]);
    });
  }
});

describe("kernel loader", () => {
  afterEach(() => vi.unstubAllGlobals());

  it("makes each instance its own memory of whole pages, at least the bytes asked for", async () => {
    const instantiate = kernelModule(await generatedBytes(sources[0].generated));
    const a = instantiate(3 * WASM_PAGE_BYTES + 1);
    const b = instantiate(0);
    expect(a?.memory.buffer.byteLength).toBe(4 * WASM_PAGE_BYTES);
    expect(b?.memory.buffer.byteLength).toBe(WASM_PAGE_BYTES);
    expect(a?.memory.buffer).not.toBe(b?.memory.buffer);
  });

  it("returns null where WebAssembly is missing or the module does not validate", async () => {
    const bytes = await generatedBytes(sources[0].generated);
    expect(kernelModule(bytes.slice(0, 20))(1024)).toBeNull();
    vi.stubGlobal("WebAssembly", undefined);
    expect(kernelModule(bytes)(1024)).toBeNull();
  });
});

describe("kernel arena (issue #22: instances reused from file to file)", () => {
  it("hands an arena's instances back, zeroed, to the next arena asking for that memory size", async () => {
    const instantiate = kernelModule(await generatedBytes(sources[0].generated));
    const first = createKernelArena();
    const a = first.run(() => instantiate(2 * WASM_PAGE_BYTES));
    const small = first.run(() => instantiate(100));
    new Uint8Array(a!.memory.buffer).fill(7);
    first.release();
    const second = createKernelArena();
    const b = second.run(() => instantiate(2 * WASM_PAGE_BYTES));
    // The same instance, with a memory as a fresh one has it.
    expect(b).toBe(a);
    expect(new Uint8Array(b!.memory.buffer).every((v) => v === 0)).toBe(true);
    // Another size is not handed out for this one; the released one-page instance is there for its size.
    const c = second.run(() => instantiate(3 * WASM_PAGE_BYTES));
    expect(c).not.toBe(a);
    expect(second.run(() => instantiate(1))).toBe(small);
    // Taken once: a second ask while it is in use makes a new one.
    expect(second.run(() => instantiate(2 * WASM_PAGE_BYTES))).not.toBe(a);
  });

  it("never hands out an instance still in use: not outside an arena, not twice, not after a second release", async () => {
    const instantiate = kernelModule(await generatedBytes(sources[0].generated));
    const outside = instantiate(WASM_PAGE_BYTES);
    const first = createKernelArena();
    const a = first.run(() => instantiate(WASM_PAGE_BYTES));
    first.release();
    first.release();
    // Outside any arena nothing is pooled or reused.
    expect(instantiate(WASM_PAGE_BYTES)).not.toBe(a);
    const second = createKernelArena();
    const third = createKernelArena();
    const b = second.run(() => instantiate(WASM_PAGE_BYTES));
    const c = third.run(() => instantiate(WASM_PAGE_BYTES));
    expect(b).toBe(a);
    expect(c).not.toBe(a);
    expect(c).not.toBe(outside);
    // A released arena runs later code without pooling.
    const late = first.run(() => instantiate(WASM_PAGE_BYTES));
    second.release();
    expect(third.run(() => instantiate(WASM_PAGE_BYTES))).toBe(a);
    expect(createKernelArena().run(() => instantiate(WASM_PAGE_BYTES))).not.toBe(late);
  });
});
