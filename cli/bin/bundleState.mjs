// Whether cli/dist (built by build.mjs) is current: every source listed in its manifest still has the size
// and mtime it had when bundled. Shared by tidemark.js and the benchmark.
import { readFileSync, statSync } from "node:fs";

const root = new URL("../../", import.meta.url);

/** Sources that changed since the build (empty when current); null when there is no usable bundle. */
export function staleBundleSources() {
  let manifest;
  try {
    manifest = JSON.parse(readFileSync(new URL("../dist/manifest.json", import.meta.url), "utf8"));
  } catch {
    return null;
  }
  const inputs = Object.entries(manifest.inputs ?? {});
  if (inputs.length === 0) return null;
  return inputs
    .filter(([file, built]) => {
      const now = statSync(new URL(file, root), { throwIfNoEntry: false });
      return !now || now.size !== built.size || now.mtimeMs !== built.mtimeMs;
    })
    .map(([file]) => file);
}
