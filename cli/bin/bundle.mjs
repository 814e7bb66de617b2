// esbuild settings for the CLI, shared by build.mjs (cli/dist) and scripts/pack-cli.mjs (the package users
// install). Both bundle the npm packages as well: Node then loads a few large files instead of resolving,
// reading and (for CommonJS) re-parsing hundreds, which takes ≈ 80 ms of CPU off every start (issue #22),
// and the benchmark times what users run.
//
// The command itself is one CommonJS file, bin.cjs, which runBundle.mjs compiles through node:vm with V8's
// code cache (Node 20 caches no ES module's code). The worker threads' entries stay ES modules with shared
// chunks: they start once a scan, not once a command.
import { createHash } from "node:crypto";
import { mkdir, writeFile } from "node:fs/promises";
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

/** The command's bundle in outdir, and the comment at its end that names its build (runBundle.mjs keys its code cache on it). */
export const MAIN_BUNDLE = "bin.cjs";
export const BUNDLE_ID_MARK = "//# tidemarkBundleId=";

const unbundled = {
  name: "unbundled-packages",
  setup(b) {
    b.onResolve({ filter: /^@(napi-rs\/canvas|fontsource\/source-sans-3)(\/|$)/ }, (args) => ({ path: args.path, external: true }));
  },
};

// CommonJS packages inside an ESM bundle call require() for Node's own modules: give them one.
const REQUIRE_SHIM = 'import { createRequire as __tidemarkCreateRequire } from "node:module"; const require = __tidemarkCreateRequire(import.meta.url);';
// Strict mode as in the ES module sources, and import.meta, which the sources find the workers, package.json
// and the fonts from. Put on the first line (bin.ts's shebang becomes a comment), so no line moves.
const CJS_PROLOGUE =
  '"use strict"; var __tidemarkImportMeta = { url: require("node:url").pathToFileURL(__filename).href, resolve: (s) => require("node:url").pathToFileURL(require.resolve(s)).href }; ';

/** Bundles bin.ts (CommonJS), the scan worker and the spectral thread (ESM) into `outdir`; `selfContained` bundles npm packages as well. */
export async function bundleCli({ outdir, selfContained = false }) {
  const common = {
    absWorkingDir: repoRoot,
    outdir,
    bundle: true,
    platform: "node",
    target: "node20",
    sourcemap: selfContained ? false : "linked",
    metafile: true,
    logLevel: "warning",
    plugins: [unbundled],
    legalComments: selfContained ? "eof" : undefined,
  };
  const workers = await build({
    ...common,
    entryPoints: { scanWorker: "cli/src/scan/scanWorker.ts", spectralThread: "cli/src/scan/spectralThread.ts" },
    // Chunks the two workers share; every file lands in outdir itself, so the sources' relative URLs
    // (../package.json, ./scanWorker.js) resolve alike from any of them.
    splitting: true,
    chunkNames: "[name]-[hash]",
    format: "esm",
    banner: { js: REQUIRE_SHIM },
  });
  // Lazily imported commands stay lazy inside the one file: esbuild runs a module's body when it is first
  // imported, and V8 compiles a function when it is first called (or takes it from the code cache).
  const main = await build({
    ...common,
    entryPoints: { bin: "cli/src/bin.ts" },
    format: "cjs",
    outExtension: { ".js": ".cjs" },
    define: { "import.meta": "__tidemarkImportMeta" },
    write: false,
  });
  await mkdir(outdir, { recursive: true });
  for (const file of main.outputFiles) {
    let text = file.text;
    if (path.basename(file.path) === MAIN_BUNDLE) {
      text = CJS_PROLOGUE + (text.startsWith("#!") ? `//${text.slice(2)}` : text);
      // The build's identity, appended (not prepended: the source map's lines stay where they are).
      text += `\n${BUNDLE_ID_MARK}${createHash("sha256").update(text).digest("hex").slice(0, 32)}\n`;
    }
    await writeFile(file.path, text);
  }
  return {
    metafile: {
      inputs: { ...workers.metafile.inputs, ...main.metafile.inputs },
      outputs: { ...workers.metafile.outputs, ...main.metafile.outputs },
    },
  };
}
