/**
 * Writes shared/src/render/colourMapTable.generated.ts: the Wrackline colour map computed from its design
 * (computeWracklineColourMap in colourMap.ts), so no process computes it at run time. Run
 * `node --import tsx scripts/generate-colour-map.ts` after changing the design; tests/shared/colourMap.test.ts
 * fails while the table is out of date.
 */
import { writeFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { colourMapTableModuleText, computeWracklineColourMap } from "../shared/src/render/colourMap.ts";

const target = path.join(path.dirname(fileURLToPath(import.meta.url)), "..", "shared", "src", "render", "colourMapTable.generated.ts");
writeFileSync(target, colourMapTableModuleText(computeWracklineColourMap()));
console.log(`wrote ${path.relative(process.cwd(), target)}`);
