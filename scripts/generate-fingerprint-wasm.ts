/**
 * Writes shared/src/fingerprint/kernels.generated.ts from kernels.wat beside it (the
 * fingerprint's WebAssembly loops). Run `node --import tsx scripts/generate-fingerprint-wasm.ts` after
 * changing the .wat; tests/shared/fingerprintResamplerSimd.test.ts fails while the file is out of date.
 */
import { readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { wasmModuleText, watToBytes } from "./lib/wasmModuleText.ts";

export const FINGERPRINT_WASM = {
  wat: "shared/src/fingerprint/kernels.wat",
  generated: "shared/src/fingerprint/kernels.generated.ts",
  generator: "scripts/generate-fingerprint-wasm.ts",
  exportName: "FINGERPRINT_KERNELS_WASM",
};

export async function fingerprintWasmText(root: string): Promise<string> {
  const wat = readFileSync(path.join(root, FINGERPRINT_WASM.wat), "utf8");
  const bytes = await watToBytes(path.basename(FINGERPRINT_WASM.wat), wat);
  return wasmModuleText({ source: FINGERPRINT_WASM.wat, generator: FINGERPRINT_WASM.generator, exportName: FINGERPRINT_WASM.exportName, bytes });
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const root = path.join(path.dirname(fileURLToPath(import.meta.url)), "..");
  writeFileSync(path.join(root, FINGERPRINT_WASM.generated), await fingerprintWasmText(root));
  console.log(`wrote ${FINGERPRINT_WASM.generated}`);
}
