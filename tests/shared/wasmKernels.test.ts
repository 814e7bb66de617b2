/**
 * The one build and the one loader of the WebAssembly kernels. Every .wat under shared/src must have its
 * generated module beside it, equal to what wabt (the WebAssembly Binary Toolkit's npm build, an independent
 * assembler) makes of the .wat as it stands (else run scripts/generate-wasm-kernels.ts), and must import its
 * memory, so the loader can make it at full size and never grow it (a grown memory detaches its buffer).
 */
import { readFileSync } from "node:fs";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { afterEach, describe, expect, it, vi } from "vitest";
import { kernelModule, WASM_PAGE_BYTES } from "../../shared/src/wasm/kernelModule.ts";
import { projectRoot } from "../../scripts/lib/paths.ts";
import { generatedKernelText, wasmKernelSources } from "../../scripts/lib/wasmKernels.ts";

const sources = wasmKernelSources();

async function generatedBytes(generated: string): Promise<Uint8Array> {
  const module = (await import(pathToFileURL(path.join(projectRoot, generated)).href)) as { WASM_MODULE_BYTES: Uint8Array };
  return module.WASM_MODULE_BYTES;
}

describe("WebAssembly kernel modules", () => {
  it("finds the level and fingerprint kernels", () => {
    expect(sources.map((s) => s.wat)).toEqual(expect.arrayContaining(["shared/src/analysis/levelKernels.wat", "shared/src/fingerprint/kernels.wat"]));
  });

  for (const source of sources) {
    it(`${source.generated} is ${source.wat} as it stands (else run scripts/generate-wasm-kernels.ts)`, async () => {
      expect(readFileSync(path.join(projectRoot, source.generated), "utf8")).toBe(await generatedKernelText(source));
    });

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
