/**
 * Writes the `.generated.ts` beside every `.wat` under shared/src (the WebAssembly SIMD kernels; see
 * scripts/lib/wasmKernels.ts). Run `node --import tsx scripts/generate-wasm-kernels.ts` after adding or
 * editing a .wat; tests/shared/wasmKernels.test.ts fails while a generated file is out of date.
 */
import { writeFileSync } from "node:fs";
import path from "node:path";
import { projectRoot } from "./lib/paths.ts";
import { generatedKernelText, wasmKernelSources } from "./lib/wasmKernels.ts";

for (const source of wasmKernelSources()) {
  writeFileSync(path.join(projectRoot, source.generated), await generatedKernelText(source));
  console.log(`wrote ${source.generated}`);
}
