// esbuild settings for the CLI, shared by build.mjs (cli/dist) and scripts/pack-cli.mjs (the package users
// install). Both bundle the npm packages as well: Node then loads a few large files instead of resolving,
// reading and (for CommonJS) re-parsing hundreds, which takes ≈ 80 ms of CPU off every start (issue #22),
// and the benchmark times what users run.
import path from "node:path";
import { fileURLToPath } from "node:url";
import { build } from "esbuild";

export const cliDir = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
export const repoRoot = path.resolve(cliDir, "..");

/**
 * Packages the self-contained bundle cannot hold: Skia's native binary (@napi-rs/canvas picks the one for
 * the machine at install) and the font files read at run time. They stay dependencies of the package.
 */
export const UNBUNDLED_PACKAGES = ["@napi-rs/canvas", "@fontsource/source-sans-3"];

const unbundled = {
  name: "unbundled-packages",
  setup(b) {
    b.onResolve({ filter: /^@(napi-rs\/canvas|fontsource\/source-sans-3)(\/|$)/ }, (args) => ({ path: args.path, external: true }));
  },
};

// CommonJS packages inside an ESM bundle call require() for Node's own modules: give them one.
const REQUIRE_SHIM = 'import { createRequire as __tidemarkCreateRequire } from "node:module"; const require = __tidemarkCreateRequire(import.meta.url);';

/** Bundles bin.ts, the scan worker and the spectral thread into `outdir`; `selfContained` bundles npm packages as well. */
export function bundleCli({ outdir, selfContained = false }) {
  return build({
    absWorkingDir: repoRoot,
    entryPoints: { bin: "cli/src/bin.ts", scanWorker: "cli/src/scan/scanWorker.ts", spectralThread: "cli/src/scan/spectralThread.ts" },
    outdir,
    bundle: true,
    // Chunks keep the lazily imported commands lazy; every file lands in outdir itself, so the sources'
    // relative URLs (../package.json, ./scanWorker.js) resolve alike from any of them.
    splitting: true,
    chunkNames: "[name]-[hash]",
    format: "esm",
    platform: "node",
    target: "node20",
    sourcemap: selfContained ? false : "linked",
    metafile: true,
    logLevel: "warning",
    plugins: [unbundled],
    banner: { js: REQUIRE_SHIM },
    legalComments: selfContained ? "eof" : undefined,
  });
}
