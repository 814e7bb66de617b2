/**
 * Writes shared/src/analysis/levelKernels.generated.ts from levelKernels.wat (the level side's WebAssembly
 * SIMD kernels, inlined so shared/ needs no file access). Run `node --import tsx scripts/generate-level-kernels.ts`
 * after editing the .wat; tests/shared/levelKernels.test.ts fails while the generated file is out of date.
 */
import { writeFileSync } from "node:fs";
import path from "node:path";
import { compileLevelKernels, LEVEL_KERNELS_GENERATED, levelKernelsModuleText } from "./lib/levelKernelsWasm.ts";

writeFileSync(LEVEL_KERNELS_GENERATED, levelKernelsModuleText(await compileLevelKernels()));
console.log(`wrote ${path.relative(process.cwd(), LEVEL_KERNELS_GENERATED)}`);
