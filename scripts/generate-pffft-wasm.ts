/**
 * Writes shared/src/spectral/pffftWasm.generated.ts: the WASM SIMD build of PFFFT shipped in
 * @echogarden/pffft-wasm (dist/simd/pffft.wasm, pinned in the root package.json), as base64, with the
 * library's licence. Embedding the bytes lets the pure core instantiate it synchronously anywhere
 * (tsx, vitest, the esbuild bundle, a worker) without file access. Run
 * `node --import tsx scripts/generate-pffft-wasm.ts` after the package changes;
 * tests/shared/pffftWasm.test.ts fails while the file is out of date.
 */
import { readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { pffftWasmModuleText, pffftPackageFiles } from "./lib/pffftWasmSource.ts";

const target = path.join(path.dirname(fileURLToPath(import.meta.url)), "..", "shared", "src", "spectral", "pffftWasm.generated.ts");
const files = pffftPackageFiles();
writeFileSync(target, pffftWasmModuleText(readFileSync(files.wasm), readFileSync(files.licence, "utf8"), files.version));
console.log(`wrote ${path.relative(process.cwd(), target)}`);
