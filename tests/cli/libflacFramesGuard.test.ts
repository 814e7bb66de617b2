/**
 * cli/src/audio/libflacFrames.ts reaches into @wasm-audio-decoders/flac's internals (the compiled module behind
 * `_decoder._common.wasm.getModule`, its export and import names, the table slot of its write callback). A
 * package whose internals moved must give a clear error naming the package, never a wrong decode: here a fake
 * package hands out modules that differ from the pinned build in each of those ways.
 */
import { afterEach, describe, expect, it, vi } from "vitest";
import { WASM_MODULE_BYTES as HOOK_BYTES } from "../../shared/src/flac/libflacWriteHook.generated.ts";
import { watToBytes } from "../../scripts/lib/wasmKernels.ts";

const fake = vi.hoisted(() => ({ module: null as unknown }));

vi.mock("@wasm-audio-decoders/flac", () => ({
  FLACDecoder: class {
    ready = Promise.resolve();
    _decoder = { _common: { wasm: { getModule: () => Promise.resolve(fake.module) } } };
    free(): void {}
  },
}));

afterEach(() => vi.resetModules());

async function load(): Promise<typeof import("../../cli/src/audio/libflacFrames.ts")> {
  return import("../../cli/src/audio/libflacFrames.ts");
}

describe("libflacFrames against a package whose internals moved", () => {
  it("no compiled module behind getModule()", async () => {
    fake.module = { not: "a module" };
    await expect((await load()).createLibflacFrames()).rejects.toThrow(/@wasm-audio-decoders\/flac: expected the 0\.2\.x build.*no compiled module/);
  });

  it("a module with other exports and imports", async () => {
    fake.module = new WebAssembly.Module(HOOK_BYTES as Uint8Array<ArrayBuffer>);
    await expect((await load()).createLibflacFrames()).rejects.toThrow(/@wasm-audio-decoders\/flac: expected the 0\.2\.x build.*exports or imports differ/);
  });

  it("the pinned build's exports and imports, but its write callback is not in the table", async () => {
    // The pinned build's imports: module "a", functions "a" to "i" (written so no import scanner takes them for ours).
    const importModule = JSON.stringify("a");
    const imports = "abcdefghi".split("").map((n) => `(import ${importModule} "${n}" (func))`).join(" ");
    const funcs = "klmnopr".split("").map((n) => `(func (export "${n}") (param i32 i32 i32 i32 i32 i32 i32 i32) (result i32) (i32.const 8))`).join(" ");
    const wat = `(module ${imports} (memory (export "j") 1) ${funcs} (table (export "q") 2 funcref) (elem (i32.const 1) 10))`;
    fake.module = new WebAssembly.Module((await watToBytes("guard.wat", wat)) as Uint8Array<ArrayBuffer>);
    await expect((await load()).createLibflacFrames()).rejects.toThrow(/@wasm-audio-decoders\/flac: expected the 0\.2\.x build.*write callback \(function 41\) is in 0 table slots, not 1/);
  });
});
