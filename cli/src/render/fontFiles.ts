/** The shipped font files: Source Sans 3 (OFL 1.1) subsets from @fontsource/source-sans-3, in fallback order. */
import { createRequire } from "node:module";

/** Subsets in fallback order; Latin first, as its .notdef is the box for characters no subset has. */
export const SUBSETS = ["latin", "latin-ext", "greek", "cyrillic"] as const;
const WEIGHT = 500;

export function fontFilePaths(): string[] {
  const require = createRequire(import.meta.url);
  return SUBSETS.map((s) => require.resolve(`@fontsource/source-sans-3/files/source-sans-3-${s}-${WEIGHT}-normal.woff`));
}
