// Whether cli/dist (built by build.mjs) is current: every source listed in its manifest still has the size
// and mtime it had when bundled. Shared by tidemark.js and the benchmark.
import { readFileSync, statSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

// Paths joined as strings: a URL built and converted back for each of ≈ 200 sources cost ≈ 2 ms a start.
const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");

/** Sources that changed since the build (empty when current); null when there is no usable bundle. */
export function staleBundleSources() {
  let manifest;
  try {
    manifest = JSON.parse(readFileSync(path.join(root, "cli", "dist", "manifest.json"), "utf8"));
  } catch {
    return null;
  }
  const inputs = Object.entries(manifest.inputs ?? {});
  if (inputs.length === 0) return null;
  return inputs
    .filter(([file, built]) => {
      const now = statSync(path.join(root, file), { throwIfNoEntry: false });
      return !now || now.size !== built.size || now.mtimeMs !== built.mtimeMs;
    })
    .map(([file]) => file);
}
