/**
 * Writes cli/src/render/fontFacts.generated.ts: the metrics, character coverage and missing-glyph box of
 * each shipped Source Sans 3 subset, read with fontkit (cli/src/render/fontFactsFromFile.ts), so the scan
 * draws its labels without loading fontkit. Run `node --import tsx scripts/generate-font-facts.ts` after
 * @fontsource/source-sans-3 changes; tests/cli/fontFacts.test.ts fails while the file is out of date.
 */
import { readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { fontFactsFromFile, fontFactsModuleText } from "../cli/src/render/fontFactsFromFile.ts";
import { fontFilePaths } from "../cli/src/render/fontFiles.ts";

const target = path.join(path.dirname(fileURLToPath(import.meta.url)), "..", "cli", "src", "render", "fontFacts.generated.ts");
const facts = fontFilePaths().map((file) => fontFactsFromFile(readFileSync(file), file));
writeFileSync(target, fontFactsModuleText(facts));
console.log(`wrote ${path.relative(process.cwd(), target)}`);
