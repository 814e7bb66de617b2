/** The shipped font files: Source Sans 3 (OFL 1.1) subsets from @fontsource/source-sans-3, in fallback order. */
import { createRequire } from "node:module";
import path from "node:path";

/** Subsets in fallback order; Latin first, as its .notdef is the box for characters no subset has. */
export const SUBSETS = ["latin", "latin-ext", "greek", "cyrillic"] as const;
const WEIGHT = 500;

const fileName = (subset: string): string => `source-sans-3-${subset}-${WEIGHT}-normal.woff`;

/**
 * One package lookup: the subsets lie side by side in its files folder (each resolve walks node_modules
 * again). Through the package's exact "./LICENSE" export, beside that folder: resolving a file under its
 * "./files/*" pattern export took ≈ 2 ms of every scan that draws (issue #22), the exact key ≈ 0.15 ms.
 */
export function fontFilePaths(): string[] {
  const require = createRequire(import.meta.url);
  let folder: string;
  try {
    folder = path.join(path.dirname(require.resolve("@fontsource/source-sans-3/LICENSE")), "files");
  } catch {
    folder = path.dirname(require.resolve(`@fontsource/source-sans-3/files/${fileName(SUBSETS[0])}`));
  }
  return SUBSETS.map((s) => path.join(folder, fileName(s)));
}
